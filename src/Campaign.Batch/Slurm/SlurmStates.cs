namespace Campaign.Batch.Slurm;

/// <summary>
/// Slurm's job state codes (squeue, scontrol and sacct; long names and squeue's short codes) mapped to
/// <see cref="JobState"/>. Anything else maps to <see cref="JobState.Unrecognised"/>. Table in docs/batch-systems.md.
/// </summary>
public static class SlurmStates
{
    /// <summary>Every native state Campaign knows, long name and short code.</summary>
    public static readonly IReadOnlyDictionary<string, JobState> Map = new Dictionary<string, JobState>(StringComparer.Ordinal)
    {
        // Base states.
        ["PENDING"] = JobState.Waiting, ["PD"] = JobState.Waiting,
        ["RUNNING"] = JobState.Working, ["R"] = JobState.Working,
        ["SUSPENDED"] = JobState.Paused, ["S"] = JobState.Paused,
        ["COMPLETED"] = JobState.Succeeded, ["CD"] = JobState.Succeeded,
        ["FAILED"] = JobState.Crashed, ["F"] = JobState.Crashed,
        ["TIMEOUT"] = JobState.OutOfTime, ["TO"] = JobState.OutOfTime,
        ["CANCELLED"] = JobState.Stopped, ["CA"] = JobState.Stopped,
        ["NODE_FAIL"] = JobState.Interrupted, ["NF"] = JobState.Interrupted,
        ["PREEMPTED"] = JobState.Interrupted, ["PR"] = JobState.Interrupted,
        ["OUT_OF_MEMORY"] = JobState.Crashed, ["OOM"] = JobState.Crashed,
        ["BOOT_FAIL"] = JobState.Crashed, ["BF"] = JobState.Crashed,
        ["DEADLINE"] = JobState.Crashed, ["DL"] = JobState.Crashed,

        // Flags shown instead of the base state.
        ["COMPLETING"] = JobState.Working, ["CG"] = JobState.Working,
        ["CONFIGURING"] = JobState.Waiting, ["CF"] = JobState.Waiting,
        ["REQUEUED"] = JobState.Waiting, ["RQ"] = JobState.Waiting,
        ["REQUEUE_HOLD"] = JobState.Waiting, ["RH"] = JobState.Waiting,
        ["REQUEUE_FED"] = JobState.Waiting, ["RF"] = JobState.Waiting,
        ["SPECIAL_EXIT"] = JobState.Waiting, ["SE"] = JobState.Waiting,
        ["RESIZING"] = JobState.Working, ["RS"] = JobState.Working,
        ["SIGNALING"] = JobState.Working, ["SI"] = JobState.Working,
        ["STAGE_OUT"] = JobState.Working, ["SO"] = JobState.Working,
        ["STOPPED"] = JobState.Paused, ["ST"] = JobState.Paused,
        ["RESV_DEL_HOLD"] = JobState.Waiting, ["RD"] = JobState.Waiting,
        ["REVOKED"] = JobState.Stopped, ["RV"] = JobState.Stopped,
        ["POWER_UP_NODE"] = JobState.Waiting, ["PU"] = JobState.Waiting,
        ["UPDATE_DB"] = JobState.Working, ["UD"] = JobState.Working,
    };

    /// <summary>
    /// Maps a state as printed ("CANCELLED by 1000", "COMPLETED+", "RUNNING") to <see cref="JobState"/>:
    /// the first word, without a trailing '+'.
    /// </summary>
    public static JobState Parse(string native)
    {
        var word = native.Trim().Split(' ', 2)[0].TrimEnd('+');
        return Map.TryGetValue(word, out var state) ? state : JobState.Unrecognised;
    }
}
