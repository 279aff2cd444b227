using System.Diagnostics;
using System.Globalization;

namespace Campaign.Batch.Local;

/// <summary>
/// The embedded default batch system: runs each job leg as a local process under its own supervisor (see
/// <see cref="LocalSupervisor"/>), at most <see cref="LocalOptions.Cores"/> cores at a time, first come first
/// served, an afterany dependency waiting for the earlier job to end. All state is in files under
/// <see cref="LocalOptions.Root"/> (pids with their start times, so a reused pid is never mistaken for the job;
/// exit records), so a restarted host finds jobs still running and jobs that ended while it was down. Queued jobs
/// start when the host submits or queries (the tracking loop queries regularly).
/// </summary>
public sealed class LocalBatchSystem : IBatchSystem
{
    private readonly LocalOptions _options;

    /// <summary>Creates the runner; its folder is created when missing.</summary>
    public LocalBatchSystem(LocalOptions options)
    {
        if (options.Cores < 1)
        {
            throw new ArgumentOutOfRangeException(nameof(options), options.Cores, "The local runner needs at least one core.");
        }

        _options = options;
        Directory.CreateDirectory(JobsFolder);
    }

    private string JobsFolder => Path.Combine(_options.Root, "jobs");

    /// <inheritdoc />
    public Task<string> SubmitAsync(JobRequest request, CancellationToken cancellationToken)
    {
        request.Validate();
        if (request.Cores > _options.Cores)
        {
            throw new BatchSystemException(BatchErrorKind.Rejected, $"the job needs {request.Cores} cores; the local runner has {_options.Cores}");
        }

        string id;
        using (Lock())
        {
            var counter = Path.Combine(_options.Root, "next-id");
            var next = File.Exists(counter) ? long.Parse(File.ReadAllText(counter), CultureInfo.InvariantCulture) : 1;
            id = next.ToString(CultureInfo.InvariantCulture);
            LocalJobFiles.WriteAtomically(counter, (next + 1).ToString(CultureInfo.InvariantCulture));
            var files = Files(id);
            Directory.CreateDirectory(files.Folder);
            files.WriteRequest(new LocalJobRecord(
                id,
                request.Name,
                request.Script,
                request.WorkingDirectory,
                request.Cores,
                request.WallTime.TotalSeconds,
                request.OutputPath,
                request.ErrorPath,
                new Dictionary<string, string>(request.Environment),
                request.AfterAny,
                request.Warning?.Signal,
                request.Warning?.SecondsBefore ?? 0,
                _options.GracePeriod.TotalSeconds,
                DateTimeOffset.UtcNow.ToString("O", CultureInfo.InvariantCulture)));
            Schedule();
        }

        return Task.FromResult(id);
    }

    /// <inheritdoc />
    public Task<IReadOnlyDictionary<string, JobStatus>> QueryAsync(IReadOnlyCollection<string> jobIds, CancellationToken cancellationToken)
    {
        var result = new Dictionary<string, JobStatus>(StringComparer.Ordinal);
        using (Lock())
        {
            Schedule();
            foreach (var id in jobIds)
            {
                result[id] = Status(id);
            }
        }

        return Task.FromResult<IReadOnlyDictionary<string, JobStatus>>(result);
    }

    /// <inheritdoc />
    public Task CancelAsync(string jobId, CancellationToken cancellationToken)
    {
        using (Lock())
        {
            var files = Files(jobId);
            if (!File.Exists(files.RequestPath) || files.ReadExit() is not null)
            {
                return Task.CompletedTask;
            }

            File.WriteAllText(files.CancelPath, "");
            var supervisor = LocalJobFiles.ReadPid(files.SupervisorPidPath);
            if (supervisor is null)
            {
                files.WriteExit(new LocalExitRecord("stopped", null, null, 0, Now()));
            }
            else if (Posix.IsAlive(supervisor.Value.Pid, supervisor.Value.Ticks))
            {
                // Once the script runs, the supervisor's SIGTERM handler is in place; before that it reads the
                // cancel file (a signal during its start-up could kill it before it records anything).
                if (File.Exists(files.ScriptPidPath))
                {
                    Posix.SignalProcess(supervisor.Value.Pid, Posix.Signals["TERM"]);
                }
            }
            else if (LocalJobFiles.ReadPid(files.ScriptPidPath) is { } script && Posix.IsAlive(script.Pid, script.Ticks))
            {
                // The supervisor died: end the script's process group here.
                Posix.SignalGroup(script.Pid, Posix.Signals["KILL"]);
                files.WriteExit(new LocalExitRecord("stopped", null, 9, 0, Now()));
            }
        }

        return Task.CompletedTask;
    }

    /// <inheritdoc />
    public Task<string?> FindAsync(string jobName, string workingDirectory, CancellationToken cancellationToken)
    {
        var folder = Path.GetFullPath(workingDirectory);
        using (Lock())
        {
            var id = Directory.EnumerateDirectories(JobsFolder)
                .Select(Path.GetFileName)
                .OfType<string>()
                .Where(n => long.TryParse(n, NumberStyles.None, CultureInfo.InvariantCulture, out _))
                .OrderBy(n => long.Parse(n, CultureInfo.InvariantCulture))
                .LastOrDefault(n => File.Exists(Files(n).RequestPath) && Files(n).ReadRequest() is { } r && r.Name == jobName && Path.GetFullPath(r.WorkingDirectory) == folder);
            return Task.FromResult(id);
        }
    }

    private JobStatus Status(string id)
    {
        var files = Files(id);
        if (!File.Exists(files.RequestPath))
        {
            return JobStatus.MissingFor(id);
        }

        var job = files.ReadRequest();
        if (files.ReadExit() is { } exit)
        {
            var state = exit.State switch
            {
                // The local runner's own words; the second of each pair is what runners before version 8 wrote.
                "succeeded" or "completed" => JobState.Succeeded,
                "crashed" or "failed" => JobState.Crashed,
                "out_of_time" or "timed_out" => JobState.OutOfTime,
                "stopped" or "cancelled" => JobState.Stopped,
                "no_start" or "launch_failed" => JobState.Crashed,
                _ => JobState.Unrecognised,
            };
            return new JobStatus(id, state, exit.State, exit.ExitCode, exit.Signal, TimeSpan.FromSeconds(exit.ElapsedSeconds), job.Cores, job.Name, "exit record");
        }

        var supervisor = LocalJobFiles.ReadPid(files.SupervisorPidPath);
        if (supervisor is null)
        {
            return new JobStatus(id, JobState.Waiting, "queued", Name: job.Name);
        }

        if (Posix.IsAlive(supervisor.Value.Pid, supervisor.Value.Ticks))
        {
            return new JobStatus(id, JobState.Working, "running", ChargedCores: job.Cores, Name: job.Name);
        }

        if (LocalJobFiles.ReadPid(files.ScriptPidPath) is { } script && Posix.IsAlive(script.Pid, script.Ticks))
        {
            return new JobStatus(id, JobState.Working, "running (supervisor gone)", ChargedCores: job.Cores, Name: job.Name);
        }

        // Both processes are gone and no exit record was written (the cluster rebooted, or the supervisor was
        // killed): the runner has lost the job's outcome. Reported as missing, never as a success: the host carries
        // on from the run's newest valid checkpoint.
        return new JobStatus(id, JobState.Vanished, "ended without an exit record", ChargedCores: job.Cores, Name: job.Name);
    }

    /// <summary>Starts queued jobs, oldest first, while their cores fit and their dependency has ended.</summary>
    private void Schedule()
    {
        var jobs = Directory.EnumerateDirectories(JobsFolder)
            .Select(d => Path.GetFileName(d))
            .Where(n => long.TryParse(n, NumberStyles.None, CultureInfo.InvariantCulture, out _))
            .OrderBy(n => long.Parse(n, CultureInfo.InvariantCulture))
            .Select(Files)
            .Where(f => File.Exists(f.RequestPath) && f.ReadExit() is null)
            .ToList();
        var used = jobs.Where(f => File.Exists(f.SupervisorPidPath)).Sum(f => f.ReadRequest().Cores);
        foreach (var files in jobs.Where(f => !File.Exists(f.SupervisorPidPath)))
        {
            var job = files.ReadRequest();
            if (job.AfterAny is { } after && Status(after).State.IsActive())
            {
                continue;
            }

            if (used + job.Cores > _options.Cores)
            {
                break;
            }

            Launch(files);
            used += job.Cores;
        }
    }

    private void Launch(LocalJobFiles files)
    {
        // setsid puts the supervisor in its own session, so it outlives the host that started it.
        var start = new ProcessStartInfo("setsid") { UseShellExecute = false, RedirectStandardInput = true, RedirectStandardOutput = false, RedirectStandardError = false };
        start.ArgumentList.Add(_options.Supervisor.FileName);
        foreach (var argument in _options.Supervisor.Arguments)
        {
            start.ArgumentList.Add(argument);
        }

        start.ArgumentList.Add(files.Folder);
        using var process = Process.Start(start) ?? throw new BatchSystemException(BatchErrorKind.Permanent, "cannot start the local supervisor");
        process.StandardInput.Close();
        var ticks = Posix.StartTicks(process.Id) ?? 0;
        LocalJobFiles.WritePid(files.SupervisorPidPath, process.Id, ticks);
    }

    private LocalJobFiles Files(string id) => new(Path.Combine(JobsFolder, id));

    /// <summary>An exclusive lock on the runner's folder, across processes.</summary>
    private FileStream Lock()
    {
        var path = Path.Combine(_options.Root, "lock");
        for (var attempt = 0; ; attempt++)
        {
            try
            {
                return new FileStream(path, FileMode.OpenOrCreate, FileAccess.ReadWrite, FileShare.None);
            }
            catch (IOException) when (attempt < 600)
            {
                Thread.Sleep(50);
            }
        }
    }

    private static string Now() => DateTimeOffset.UtcNow.ToString("O", CultureInfo.InvariantCulture);
}
