using System.Globalization;
using Campaign.Batch;
using Campaign.Core.Domain;

namespace Campaign.App.Tests.Support;

/// <summary>
/// An in-memory batch system for one cluster, on the simulated clock, standing in for a real cluster and a real
/// simulation code: a job waits in the queue, then runs its run at a fixed pace (M per hour), appending "t" lines
/// to the run folder's progress file; it checkpoints when its wall time runs out (timed out) and writes the done
/// marker when the run reaches its target (completed). It can be taken down (every call fails as a broken
/// cluster does) and it keeps its own tally of what it ran, to check the tracker's accounting against.
/// </summary>
public sealed class SimulatedCluster : IBatchSystem
{
    private readonly TimeProvider _clock;
    private readonly ClusterProfile _profile;
    private readonly Func<string, double> _hoursToFinish;
    private readonly TimeSpan _queueWait;
    private readonly Dictionary<string, Job> _jobs = new(StringComparer.Ordinal);
    private static int _nextId = 1000;

    public SimulatedCluster(TimeProvider clock, ClusterProfile profile, Func<string, double> hoursToFinish, TimeSpan queueWait)
    {
        _clock = clock;
        _profile = profile;
        _hoursToFinish = hoursToFinish;
        _queueWait = queueWait;
    }

    /// <summary>While true every call fails as a cluster whose batch commands cannot read their configuration.</summary>
    public bool Down { get; set; }

    /// <summary>Job names this cluster refuses, as a controller refuses a job's request (its account, its size).</summary>
    public HashSet<string> Refused { get; } = new(StringComparer.Ordinal);

    /// <summary>While true a submission times out before it reaches the queue (its answer is lost, nothing was queued).</summary>
    public bool TimeOutSubmissions { get; set; }

    /// <summary>Runs whose code has stopped advancing (alive, no progress).</summary>
    public HashSet<string> Stalled { get; } = new(StringComparer.Ordinal);

    /// <summary>While true a submission reaches the queue and then its answer is lost (as when sbatch times out).</summary>
    public bool LoseAnswers { get; set; }

    /// <summary>Ids of jobs that were cancelled.</summary>
    public IReadOnlyCollection<string> Cancelled => _jobs.Values.Where(j => j.Final?.State == JobState.Stopped).Select(j => j.Id).ToList();

    /// <summary>Calls made while down.</summary>
    public int RefusedCalls { get; private set; }

    /// <summary>Jobs ever submitted, by name.</summary>
    public IReadOnlyCollection<string> SubmittedNames => _jobs.Values.Select(j => j.Request.Name).ToList();

    /// <summary>What the site would charge for every job that has ended (the cluster's own tally).</summary>
    public double ChargedByTheSite => _jobs.Values.Where(j => j.Final is not null).Sum(j => _profile.ChargedCoreHours(j.Request.Cores, j.Final!.Elapsed!.Value.TotalHours));

    public Task<string> SubmitAsync(JobRequest request, CancellationToken cancellationToken)
    {
        Check();
        if (TimeOutSubmissions)
        {
            throw new BatchSystemException(BatchErrorKind.Transient, "sbatch: error: Batch job submission failed: Socket timed out on send/recv operation");
        }

        if (Refused.Contains(request.Name))
        {
            throw new BatchSystemException(BatchErrorKind.Rejected, "sbatch: error: Batch job submission failed: Invalid account or account/partition combination specified\n(details)");
        }

        var id = Interlocked.Increment(ref _nextId).ToString(CultureInfo.InvariantCulture);
        _jobs[id] = new Job(id, request, _clock.GetUtcNow());
        if (LoseAnswers)
        {
            throw new BatchSystemException(BatchErrorKind.Transient, "sbatch: error: Batch job submission failed: Socket timed out on send/recv operation");
        }

        return Task.FromResult(id);
    }

    /// <summary>Gives the jobs named <paramref name="from"/> the name <paramref name="to"/> (as a former version of the tool named them).</summary>
    public void Rename(string from, string to)
    {
        foreach (var job in _jobs.Values.Where(j => j.Request.Name == from))
        {
            job.Request = job.Request with { Name = to };
        }
    }

    public Task<IReadOnlyDictionary<string, JobStatus>> QueryAsync(IReadOnlyCollection<string> jobIds, CancellationToken cancellationToken)
    {
        Check();
        var result = new Dictionary<string, JobStatus>(StringComparer.Ordinal);
        foreach (var id in jobIds)
        {
            result[id] = _jobs.TryGetValue(id, out var job) ? Advance(job) : JobStatus.MissingFor(id);
        }

        return Task.FromResult<IReadOnlyDictionary<string, JobStatus>>(result);
    }

    public Task CancelAsync(string jobId, CancellationToken cancellationToken)
    {
        Check();
        if (_jobs.TryGetValue(jobId, out var job) && Advance(job).State is JobState.Waiting or JobState.Working)
        {
            var ran = job.Started is { } s ? _clock.GetUtcNow() - s : TimeSpan.Zero;
            job.Final = new JobStatus(job.Id, JobState.Stopped, "CANCELLED", 0, 15, ran, job.Request.Cores, job.Request.Name);
        }

        return Task.CompletedTask;
    }

    public Task<string?> FindAsync(string jobName, string workingDirectory, CancellationToken cancellationToken)
    {
        Check();
        return Task.FromResult(_jobs.Values.Where(j => j.Request.Name == jobName && Path.GetFullPath(j.Request.WorkingDirectory) == Path.GetFullPath(workingDirectory)).Select(j => j.Id).LastOrDefault());
    }

    private void Check()
    {
        if (Down)
        {
            RefusedCalls++;
            throw new BatchSystemException(BatchErrorKind.Permanent, "sbatch: error: s_p_parse_file: unable to read \"/etc/slurm/slurm.conf\": No such file or directory\nsbatch: fatal: Unable to process configuration file");
        }
    }

    /// <summary>Moves a job to the clock's now: starts it after the queue wait, runs it, ends it.</summary>
    private JobStatus Advance(Job job)
    {
        if (job.Final is { } final)
        {
            return final;
        }

        var now = _clock.GetUtcNow();
        var start = job.Submitted + _queueWait;
        if (job.Request.AfterAny is { } before && _jobs.TryGetValue(before, out var previous))
        {
            // afterany: it starts once the job it waits for has ended, in whatever state.
            if (Advance(previous).State is JobState.Waiting or JobState.Working || previous.Started is null)
            {
                return new JobStatus(job.Id, JobState.Waiting, "PENDING", Name: job.Request.Name);
            }

            var ended = previous.Started.Value + (previous.Final!.Elapsed ?? TimeSpan.Zero);
            start = ended > start ? ended : start;
        }

        if (now < start)
        {
            return new JobStatus(job.Id, JobState.Waiting, "PENDING", Name: job.Request.Name);
        }

        var folder = job.Request.WorkingDirectory;
        var run = job.Request.Environment["CAMPAIGN_RUN_ID"];
        if (job.Started is null)
        {
            job.Started = start;
            job.StartT = RestartPoint(job.Request);
        }

        var target = Target(folder);
        var pace = Stalled.Contains(run) ? 0 : target / _hoursToFinish(run); // M per hour
        var wall = job.Request.WallTime;
        var toTarget = pace > 0 ? TimeSpan.FromHours((target - job.StartT) / pace) : TimeSpan.MaxValue;
        var ran = now - job.Started.Value;
        if (ran >= toTarget && toTarget <= wall)
        {
            Progress(folder, job, target, job.Started.Value + toTarget);
            File.WriteAllText(Path.Combine(folder, "DONE"), "");
            job.Final = new JobStatus(job.Id, JobState.Succeeded, "COMPLETED", 0, 0, toTarget, job.Request.Cores, job.Request.Name);
            return job.Final;
        }

        if (ran >= wall)
        {
            var t = job.StartT + wall.TotalHours * pace;
            Progress(folder, job, t, job.Started.Value + wall);
            Checkpoint(folder, t);
            job.Final = new JobStatus(job.Id, JobState.OutOfTime, "TIMEOUT", 0, 0, wall, job.Request.Cores, job.Request.Name);
            return job.Final;
        }

        Progress(folder, job, job.StartT + ran.TotalHours * pace, now);
        return new JobStatus(job.Id, JobState.Working, "RUNNING", Elapsed: ran, Name: job.Request.Name);
    }

    private static double Target(string folder)
    {
        var text = File.ReadAllText(Path.Combine(folder, "run.json"));
        using var json = System.Text.Json.JsonDocument.Parse(text);
        return json.RootElement.GetProperty("target_length").GetDouble();
    }

    private static double RestartPoint(JobRequest request)
    {
        if (!request.Environment.TryGetValue("CAMPAIGN_RESTART", out var path))
        {
            return 0;
        }

        if (path == "newest")
        {
            // Decided when it starts, as the leg script does: the newest checkpoint with its marker.
            var folder = Path.Combine(request.WorkingDirectory, "checkpoints");
            path = Directory.Exists(folder) ? Directory.EnumerateFiles(folder, "ckpt-*.json").Where(f => File.Exists(f + ".ok")).Order(StringComparer.Ordinal).LastOrDefault() ?? "" : "";
        }

        return File.Exists(path) ? double.Parse(File.ReadAllText(path), CultureInfo.InvariantCulture) : 0;
    }

    private static void Progress(string folder, Job job, double t, DateTimeOffset at)
    {
        if (t > job.Reported)
        {
            File.AppendAllText(Path.Combine(folder, "progress.dat"), t.ToString("R", CultureInfo.InvariantCulture) + "\n");
            job.Reported = t;
        }

        _ = at;
    }

    private void Checkpoint(string folder, double t)
    {
        var directory = Path.Combine(folder, "checkpoints");
        Directory.CreateDirectory(directory);
        var file = Path.Combine(directory, "ckpt-" + ((long)(t * 1000)).ToString("D12", CultureInfo.InvariantCulture) + ".json");
        File.WriteAllText(file, t.ToString("R", CultureInfo.InvariantCulture));
        File.WriteAllText(file + ".ok", "");
        File.SetLastWriteTimeUtc(file, _clock.GetUtcNow().UtcDateTime);
    }

    private sealed class Job(string id, JobRequest request, DateTimeOffset submitted)
    {
        public string Id { get; } = id;

        public JobRequest Request { get; set; } = request;

        public DateTimeOffset Submitted { get; } = submitted;

        public DateTimeOffset? Started { get; set; }

        public double StartT { get; set; }

        public double Reported { get; set; } = double.NegativeInfinity;

        public JobStatus? Final { get; set; }
    }
}
