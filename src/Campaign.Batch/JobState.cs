namespace Campaign.Batch;

/// <summary>
/// Campaign's own normalised job states; every adapter maps its native states onto these (tables in
/// docs/batch-systems.md).
/// </summary>
public enum JobState
{
    /// <summary>Waiting to start (queued, held, waiting for a dependency or resources).</summary>
    Pending,

    /// <summary>Running (also: being configured or resized, or signalled).</summary>
    Running,

    /// <summary>Suspended or stopped; may resume.</summary>
    Suspended,

    /// <summary>Finished its work, cleaning up (COMPLETING, staging out): final state not known yet.</summary>
    Finishing,

    /// <summary>Put back in the queue by the batch system (requeued); it will run again.</summary>
    Requeued,

    /// <summary>Ended with exit code 0.</summary>
    Completed,

    /// <summary>Ended with a non-zero exit code or a signal.</summary>
    Failed,

    /// <summary>Cancelled by a user or an administrator.</summary>
    Cancelled,

    /// <summary>Stopped at its wall-time limit.</summary>
    TimedOut,

    /// <summary>Ended because a node it ran on failed.</summary>
    NodeFailed,

    /// <summary>Ended because a higher-priority job took its resources.</summary>
    Preempted,

    /// <summary>Killed for exceeding its memory.</summary>
    OutOfMemory,

    /// <summary>Could not start (node boot or launch failure).</summary>
    LaunchFailed,

    /// <summary>Ended because it could not finish before its deadline.</summary>
    DeadlineMissed,

    /// <summary>A native state this adapter does not know. Never treated as finished.</summary>
    Unknown,

    /// <summary>The batch system does not know the job id (never submitted, or forgotten with no record left).</summary>
    Missing,
}

/// <summary>Questions about <see cref="JobState"/>.</summary>
public static class JobStates
{
    /// <summary>True for the states after which the job will not run again.</summary>
    public static bool IsFinal(this JobState state) => state is JobState.Completed or JobState.Failed or JobState.Cancelled
        or JobState.TimedOut or JobState.NodeFailed or JobState.Preempted or JobState.OutOfMemory or JobState.LaunchFailed
        or JobState.DeadlineMissed;

    /// <summary>True while the job may still run or is running.</summary>
    public static bool IsActive(this JobState state) => state is JobState.Pending or JobState.Running or JobState.Suspended
        or JobState.Finishing or JobState.Requeued;
}
