namespace Campaign.Batch.Slurm;

/// <summary>
/// Slurm's job state codes (squeue, scontrol and sacct; long names and squeue's short codes) mapped to
/// <see cref="JobState"/>. Anything else maps to <see cref="JobState.Unknown"/>. Table in docs/batch-systems.md.
/// </summary>
public static class SlurmStates
{
    /// <summary>Every native state Campaign knows, long name and short code.</summary>
    public static readonly IReadOnlyDictionary<string, JobState> Map = new Dictionary<string, JobState>(StringComparer.Ordinal)
    {
        // Base states.
        ["PENDING"] = JobState.Pending, ["PD"] = JobState.Pending,
        ["RUNNING"] = JobState.Running, ["R"] = JobState.Running,
        ["SUSPENDED"] = JobState.Suspended, ["S"] = JobState.Suspended,
        ["COMPLETED"] = JobState.Completed, ["CD"] = JobState.Completed,
        ["FAILED"] = JobState.Failed, ["F"] = JobState.Failed,
        ["TIMEOUT"] = JobState.TimedOut, ["TO"] = JobState.TimedOut,
        ["CANCELLED"] = JobState.Cancelled, ["CA"] = JobState.Cancelled,
        ["NODE_FAIL"] = JobState.NodeFailed, ["NF"] = JobState.NodeFailed,
        ["PREEMPTED"] = JobState.Preempted, ["PR"] = JobState.Preempted,
        ["OUT_OF_MEMORY"] = JobState.OutOfMemory, ["OOM"] = JobState.OutOfMemory,
        ["BOOT_FAIL"] = JobState.LaunchFailed, ["BF"] = JobState.LaunchFailed,
        ["DEADLINE"] = JobState.DeadlineMissed, ["DL"] = JobState.DeadlineMissed,

        // Flags shown instead of the base state.
        ["COMPLETING"] = JobState.Finishing, ["CG"] = JobState.Finishing,
        ["CONFIGURING"] = JobState.Pending, ["CF"] = JobState.Pending,
        ["REQUEUED"] = JobState.Requeued, ["RQ"] = JobState.Requeued,
        ["REQUEUE_HOLD"] = JobState.Requeued, ["RH"] = JobState.Requeued,
        ["REQUEUE_FED"] = JobState.Requeued, ["RF"] = JobState.Requeued,
        ["SPECIAL_EXIT"] = JobState.Requeued, ["SE"] = JobState.Requeued,
        ["RESIZING"] = JobState.Running, ["RS"] = JobState.Running,
        ["SIGNALING"] = JobState.Running, ["SI"] = JobState.Running,
        ["STAGE_OUT"] = JobState.Finishing, ["SO"] = JobState.Finishing,
        ["STOPPED"] = JobState.Suspended, ["ST"] = JobState.Suspended,
        ["RESV_DEL_HOLD"] = JobState.Pending, ["RD"] = JobState.Pending,
        ["REVOKED"] = JobState.Cancelled, ["RV"] = JobState.Cancelled,
        ["POWER_UP_NODE"] = JobState.Pending, ["PU"] = JobState.Pending,
        ["UPDATE_DB"] = JobState.Finishing, ["UD"] = JobState.Finishing,
    };

    /// <summary>
    /// Maps a state as printed ("CANCELLED by 1000", "COMPLETED+", "RUNNING") to <see cref="JobState"/>:
    /// the first word, without a trailing '+'.
    /// </summary>
    public static JobState Parse(string native)
    {
        var word = native.Trim().Split(' ', 2)[0].TrimEnd('+');
        return Map.TryGetValue(word, out var state) ? state : JobState.Unknown;
    }
}
