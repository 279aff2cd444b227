namespace Campaign.Batch;

/// <summary>
/// Campaign's own job states: the few distinctions the tracker acts on, the same for every back end. Each adapter
/// maps its batch system's native states onto these (tables in docs/batch-systems.md); the native state is kept
/// beside it and shown labelled as the batch system's own ("slurm RUNNING", "pbs R").
/// </summary>
public enum JobState
{
    /// <summary>In the queue and not using cores: queued, held, waiting for a dependency, put back in the queue.</summary>
    Waiting,

    /// <summary>Holding its cores: running, or finishing up before its outcome is known.</summary>
    Working,

    /// <summary>Suspended or stopped by the batch system; it may resume.</summary>
    Paused,

    /// <summary>Ended by its own script with exit code 0.</summary>
    Succeeded,

    /// <summary>Ended at its wall-time limit.</summary>
    OutOfTime,

    /// <summary>Ended badly by its own doing: a non-zero exit, a signal, its memory exceeded, or its script could not start.</summary>
    Crashed,

    /// <summary>Ended by the cluster, not by the job: a node went down, or the job was pre-empted.</summary>
    Interrupted,

    /// <summary>Cancelled, by a person or by the tracker.</summary>
    Stopped,

    /// <summary>A native state the adapter does not know. Never treated as ended.</summary>
    Unrecognised,

    /// <summary>The batch system does not know the job id (never submitted, or forgotten with no record left).</summary>
    Vanished,
}

/// <summary>Questions about <see cref="JobState"/>.</summary>
public static class JobStates
{
    /// <summary>True for the states after which the job will not run again.</summary>
    public static bool IsFinal(this JobState state) => state is JobState.Succeeded or JobState.OutOfTime or JobState.Crashed
        or JobState.Interrupted or JobState.Stopped;

    /// <summary>True while the job may still run or is running.</summary>
    public static bool IsActive(this JobState state) => state is JobState.Waiting or JobState.Working or JobState.Paused;

    /// <summary>The name stored and shown: snake_case ("out_of_time").</summary>
    public static string Name(this JobState state) => state switch
    {
        JobState.OutOfTime => "out_of_time",
        _ => state.ToString().ToLowerInvariant(),
    };

    /// <summary>Every state by its stored name.</summary>
    public static readonly IReadOnlyDictionary<string, JobState> ByName =
        Enum.GetValues<JobState>().ToDictionary(s => s.Name(), s => s, StringComparer.Ordinal);

    /// <summary>
    /// How a job ended, in words: "exit 0", "exit 3", "signal 10 (USR1)". The signal is named when it is one of the
    /// common POSIX ones. Empty when nothing is known.
    /// </summary>
    public static string Exit(int? exitCode, int? signal)
    {
        if (signal is > 0 and var s)
        {
            return SignalNames.TryGetValue(s, out var name) ? $"signal {s} ({name})" : $"signal {s}";
        }

        return exitCode is { } code ? $"exit {code}" : "";
    }

    private static readonly Dictionary<int, string> SignalNames = new()
    {
        [1] = "HUP", [2] = "INT", [3] = "QUIT", [4] = "ILL", [6] = "ABRT", [7] = "BUS", [8] = "FPE", [9] = "KILL",
        [10] = "USR1", [11] = "SEGV", [12] = "USR2", [13] = "PIPE", [14] = "ALRM", [15] = "TERM", [24] = "XCPU",
    };
}
