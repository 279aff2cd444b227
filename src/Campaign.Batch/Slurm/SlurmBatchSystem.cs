using System.Globalization;
using Campaign.Batch.Processes;

namespace Campaign.Batch.Slurm;

/// <summary>
/// Slurm adapter. Submits with `sbatch --parsable`; queries every tracked job with one `squeue -t all` call for
/// the user's jobs; finished jobs' exit codes come from `scontrol -o show job` while the controller remembers
/// them, then from `sacct` when accounting is on, then from the job-completion text file when configured;
/// otherwise the exit code stays unknown (never guessed). Cancels with `scancel`.
/// </summary>
public sealed class SlurmBatchSystem : IBatchSystem
{
    /// <summary>
    /// The controller answered and refused this request (sbatch prints "Batch job submission failed: REASON" for
    /// a job it rejects). Anything else that is not transient (sbatch missing, its configuration unreadable) is
    /// the cluster's fault.
    /// </summary>
    private static readonly string[] RejectionMarks =
    {
        "Batch job submission failed",
    };

    private static readonly string[] TransientMarks =
    {
        "Socket timed out", "Unable to contact slurm controller", "Connection refused", "Zero Bytes were transmitted",
        "slurm_receive_msg", "Communication connection failure", "temporarily unavailable", "try again", "Connection timed out",
        "Slurm backup controller in standby mode", "Transport endpoint is not connected",
    };

    private readonly SlurmOptions _options;
    private readonly IShell _runner;
    private readonly IReadOnlyDictionary<string, string> _environment;
    private string? _jobCompletionFile;
    private bool _jobCompletionFileKnown;

    /// <summary>Creates the adapter; its commands run through <paramref name="shell"/> (this host when null).</summary>
    public SlurmBatchSystem(SlurmOptions options, IShell? shell = null)
    {
        _options = options;
        var environment = new Dictionary<string, string>();
        if (options.ConfigFile is { } config)
        {
            environment["SLURM_CONF"] = config;
        }

        _environment = environment;
        _runner = shell ?? new LocalShell();
        _jobCompletionFile = options.JobCompletionFile;
        _jobCompletionFileKnown = options.JobCompletionFile is not null;
    }

    /// <summary>The sbatch arguments for a request (the script last).</summary>
    public IReadOnlyList<string> SubmitArguments(JobRequest request)
    {
        var minutes = (long)Math.Ceiling(request.WallTime.TotalMinutes);
        var arguments = new List<string>
        {
            "--parsable",
            "--job-name=" + request.Name,
            "--chdir=" + request.WorkingDirectory,
            "--output=" + request.OutputPath,
            "--error=" + request.ErrorPath,
            "--ntasks=" + request.Cores.ToString(CultureInfo.InvariantCulture),
            "--time=" + minutes.ToString(CultureInfo.InvariantCulture),
            "--export=ALL",
        };
        if (request.Nodes is { } nodes)
        {
            arguments.Add("--nodes=" + nodes.ToString(CultureInfo.InvariantCulture));
        }

        if (_options.Partition is { } partition)
        {
            arguments.Add("--partition=" + partition);
        }

        if (_options.Account is { } account)
        {
            arguments.Add("--account=" + account);
        }

        if (request.AfterAny is { } after)
        {
            arguments.Add("--dependency=afterany:" + after);
        }

        if (request.Warning is { } warning)
        {
            // B: sends the signal to the batch shell itself, so the script's trap sees it.
            arguments.Add($"--signal=B:{warning.Signal}@{warning.SecondsBefore.ToString(CultureInfo.InvariantCulture)}");
        }

        arguments.Add(request.Script);
        return arguments;
    }

    /// <inheritdoc />
    public async Task<string> SubmitAsync(JobRequest request, CancellationToken cancellationToken)
    {
        request.Validate();
        var result = await Run("sbatch", SubmitArguments(request), cancellationToken, request.Environment).ConfigureAwait(false);
        return SlurmParsers.SbatchJobId(result.StandardOutput);
    }

    /// <inheritdoc />
    public async Task<IReadOnlyDictionary<string, JobStatus>> QueryAsync(IReadOnlyCollection<string> jobIds, CancellationToken cancellationToken)
    {
        var wanted = jobIds.ToHashSet(StringComparer.Ordinal);
        var found = new Dictionary<string, JobStatus>(StringComparer.Ordinal);
        if (wanted.Count == 0)
        {
            return found;
        }

        var queue = await Run("squeue", new[] { "--noheader", "--me", "--states=all", "--format=" + SlurmParsers.SqueueFormat }, cancellationToken).ConfigureAwait(false);
        foreach (var status in SlurmParsers.Squeue(queue.StandardOutput).Where(s => wanted.Contains(s.JobId)))
        {
            found[status.JobId] = status;
        }

        // Final states need exit codes: from the controller while it remembers the job.
        if (found.Values.Any(s => s.State.IsFinal()))
        {
            var show = await Run("scontrol", new[] { "--oneliner", "show", "job" }, cancellationToken, allowFailure: true).ConfigureAwait(false);
            foreach (var status in SlurmParsers.KeyValueRecords(show.StandardOutput, "scontrol").Where(s => found.TryGetValue(s.JobId, out var q) && q.State.IsFinal()))
            {
                found[status.JobId] = status;
            }
        }

        var missing = wanted.Where(id => !found.ContainsKey(id)).ToList();
        if (missing.Count > 0)
        {
            foreach (var status in await Forgotten(missing, cancellationToken).ConfigureAwait(false))
            {
                found[status.JobId] = status;
            }
        }

        foreach (var id in wanted.Where(id => !found.ContainsKey(id)))
        {
            found[id] = JobStatus.MissingFor(id);
        }

        return found;
    }

    /// <inheritdoc />
    public async Task CancelAsync(string jobId, CancellationToken cancellationToken)
    {
        var result = await Run("scancel", new[] { jobId }, cancellationToken, allowFailure: true).ConfigureAwait(false);
        if (result.ExitCode != 0 && !result.StandardError.Contains("Invalid job id", StringComparison.OrdinalIgnoreCase)
            && !result.StandardError.Contains("already completing or completed", StringComparison.OrdinalIgnoreCase))
        {
            throw Classify("scancel", result);
        }
    }

    /// <inheritdoc />
    public async Task<string?> FindAsync(string jobName, string workingDirectory, CancellationToken cancellationToken)
    {
        // A job of that name in another folder is another workspace's (or another copy's): never ours.
        var folder = Path.TrimEndingDirectorySeparator(Path.GetFullPath(workingDirectory));
        bool Ours(string dir) => dir.Length == 0 || Path.TrimEndingDirectorySeparator(dir) == folder;
        var queue = await Run("squeue", new[] { "--noheader", "--me", "--states=all", "--name=" + jobName, "--format=%i|%Z" }, cancellationToken).ConfigureAwait(false);
        var ids = queue.StandardOutput.Split('\n', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries)
            .Select(line => line.Split('|', 2))
            .Where(parts => Ours(parts.Length > 1 ? parts[1] : ""))
            .Select(parts => parts[0])
            .ToList();
        if (ids.Count > 0)
        {
            return ids.OrderBy(id => long.TryParse(id, NumberStyles.None, CultureInfo.InvariantCulture, out var n) ? n : 0).Last();
        }

        var sacct = await Run("sacct", new[] { "--parsable2", "--noheader", "--allocations", "--name=" + jobName, "--format=JobID,WorkDir" }, cancellationToken, allowFailure: true).ConfigureAwait(false);
        if (sacct.ExitCode == 0 && !(sacct.StandardError + sacct.StandardOutput).Contains("accounting storage is disabled", StringComparison.OrdinalIgnoreCase))
        {
            var found = sacct.StandardOutput.Split('\n', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries)
                .Select(line => line.Split('|', 2))
                .LastOrDefault(parts => Ours(parts.Length > 1 ? parts[1] : ""));
            if (found is not null)
            {
                return found[0];
            }
        }

        if (await JobCompletionFile(cancellationToken).ConfigureAwait(false) is { } file && await _runner.ReadFileAsync(file, cancellationToken).ConfigureAwait(false) is { } completions)
        {
            // The completion file keeps every user's jobs: a record of that name in another folder is not ours either.
            var record = SlurmParsers.KeyValueRecords(completions, "jobcomp file")
                .LastOrDefault(s => s.Name == jobName && Ours(s.WorkingDirectory ?? ""));
            return record?.JobId;
        }

        return null;
    }

    /// <summary>Jobs the controller has purged: accounting first, then the job-completion file.</summary>
    private async Task<IReadOnlyList<JobStatus>> Forgotten(IReadOnlyList<string> ids, CancellationToken cancellationToken)
    {
        var results = new Dictionary<string, JobStatus>(StringComparer.Ordinal);
        var sacct = await Run("sacct", new[] { "--parsable2", "--noheader", "--allocations", "--jobs=" + string.Join(",", ids), "--format=JobID,JobName,State,ExitCode,ElapsedRaw,AllocCPUS" }, cancellationToken, allowFailure: true).ConfigureAwait(false);
        var accountingOff = (sacct.StandardError + sacct.StandardOutput).Contains("accounting storage is disabled", StringComparison.OrdinalIgnoreCase);
        if (sacct.ExitCode == 0 && !accountingOff)
        {
            foreach (var status in SlurmParsers.Sacct(sacct.StandardOutput).Where(s => ids.Contains(s.JobId)))
            {
                results[status.JobId] = status;
            }
        }
        else if (sacct.ExitCode != 0 && !accountingOff)
        {
            throw Classify("sacct", sacct);
        }

        var left = ids.Where(id => !results.ContainsKey(id)).ToList();
        if (left.Count > 0 && await JobCompletionFile(cancellationToken).ConfigureAwait(false) is { } file && await _runner.ReadFileAsync(file, cancellationToken).ConfigureAwait(false) is { } text)
        {
            foreach (var status in SlurmParsers.KeyValueRecords(text, "jobcomp file").Where(s => left.Contains(s.JobId)))
            {
                results[status.JobId] = status; // the last record of a job wins (a requeued job has several)
            }
        }

        return results.Values.ToList();
    }

    private async Task<string?> JobCompletionFile(CancellationToken cancellationToken)
    {
        if (_jobCompletionFileKnown)
        {
            return _jobCompletionFile;
        }

        var config = await Run("scontrol", new[] { "show", "config" }, cancellationToken).ConfigureAwait(false);
        string? type = null;
        string? location = null;
        foreach (var line in config.StandardOutput.Split('\n'))
        {
            var parts = line.Split('=', 2, StringSplitOptions.TrimEntries);
            if (parts.Length != 2)
            {
                continue;
            }

            if (parts[0] == "JobCompType")
            {
                type = parts[1];
            }
            else if (parts[0] == "JobCompLoc")
            {
                location = parts[1];
            }
        }

        _jobCompletionFile = type is not null && type.Contains("filetxt", StringComparison.Ordinal) ? location : null;
        _jobCompletionFileKnown = true;
        return _jobCompletionFile;
    }

    /// <summary>Commands this adapter has run (tests check that a query is one command).</summary>
    public int CommandsRun { get; private set; }

    private async Task<CommandResult> Run(string command, IReadOnlyList<string> arguments, CancellationToken cancellationToken, IReadOnlyDictionary<string, string>? environment = null, bool allowFailure = false)
    {
        CommandsRun++;
        var file = _options.CommandFolder is { } folder ? folder.TrimEnd('/') + "/" + command : command;
        var all = environment is null ? _environment : _environment.Concat(environment).GroupBy(p => p.Key).ToDictionary(g => g.Key, g => g.Last().Value);
        var result = await _runner.RunAsync(file, arguments, cancellationToken, all).ConfigureAwait(false);
        if (result.ExitCode != 0 && !allowFailure)
        {
            throw Classify(command, result);
        }

        return result;
    }

    /// <summary>Transient when the text says the controller could not be reached; permanent otherwise.</summary>
    internal static BatchSystemException Classify(string command, CommandResult result)
    {
        var text = (result.StandardError + " " + result.StandardOutput).Trim();
        var transient = TransientMarks.Any(m => text.Contains(m, StringComparison.OrdinalIgnoreCase));
        var rejected = !transient && RejectionMarks.Any(m => text.Contains(m, StringComparison.OrdinalIgnoreCase));
        return new BatchSystemException(transient ? BatchErrorKind.Transient : rejected ? BatchErrorKind.Rejected : BatchErrorKind.Permanent, $"{command} exited with {result.ExitCode}: {text}");
    }
}
