namespace Campaign.Batch.Pbs;

/// <summary>
/// The PBS family's one-letter job states (PBS Professional and Torque documentation, `qstat`) and exit
/// statuses mapped to <see cref="JobState"/>. Table in docs/batch-systems.md.
/// </summary>
public static class PbsStates
{
    /// <summary>State letters of jobs that have not finished.</summary>
    public static readonly IReadOnlyDictionary<string, JobState> Active = new Dictionary<string, JobState>(StringComparer.Ordinal)
    {
        ["Q"] = JobState.Waiting,   // queued
        ["H"] = JobState.Waiting,   // held
        ["W"] = JobState.Waiting,   // waiting for its start time
        ["T"] = JobState.Waiting,   // in transit
        ["M"] = JobState.Waiting,   // moved to another server
        ["R"] = JobState.Working,   // running
        ["B"] = JobState.Working,   // array job: at least one subjob started
        ["E"] = JobState.Working, // exiting after having run
        ["S"] = JobState.Paused, // suspended
        ["U"] = JobState.Paused, // suspended: workstation busy
    };

    /// <summary>State letters of finished jobs: F (PBS Professional, qstat -x), X (finished subjob), C (Torque).</summary>
    public static readonly IReadOnlySet<string> Finished = new HashSet<string>(StringComparer.Ordinal) { "F", "X", "C" };

    /// <summary>
    /// The state of a job from its letter, exit status and comment. Finished jobs: exit status 0 completed;
    /// -29 (PBS Professional JOB_EXEC_KILL_WALLTIME, from memory) or a comment mentioning walltime timed out;
    /// other negative values (launch problems) failed to launch; above 256 (PBS Professional: 256 + signal)
    /// and 128-255 (shell: 128 + signal) killed by a signal; anything else failed. No exit status on a finished
    /// job: unknown.
    /// </summary>
    public static (JobState State, int? Exit, int? Signal) Resolve(string letter, int? exitStatus, string? comment)
    {
        if (Active.TryGetValue(letter, out var active))
        {
            return (active, null, null);
        }

        if (!Finished.Contains(letter))
        {
            return (JobState.Unrecognised, null, null);
        }

        if (exitStatus is not { } status)
        {
            return (JobState.Unrecognised, null, null);
        }

        if (status == -29 || (comment?.Contains("walltime", StringComparison.OrdinalIgnoreCase) ?? false))
        {
            return (JobState.OutOfTime, status, null);
        }

        return status switch
        {
            0 => (JobState.Succeeded, 0, 0),
            < 0 => (JobState.Crashed, status, null),
            > 256 => (JobState.Crashed, status, status - 256),
            > 128 => (JobState.Crashed, status, status - 128),
            _ => (JobState.Crashed, status, 0),
        };
    }
}
