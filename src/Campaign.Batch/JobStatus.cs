namespace Campaign.Batch;

/// <summary>What the batch system says about one job.</summary>
/// <param name="JobId">Job id.</param>
/// <param name="State">Normalised state.</param>
/// <param name="NativeState">The batch system's own words (for messages and the event log).</param>
/// <param name="ExitCode">Exit code of the batch script, when finished and known.</param>
/// <param name="Signal">Signal that ended it, when finished and known (0: none).</param>
/// <param name="Elapsed">Wall-clock time it ran, when known.</param>
/// <param name="ChargedCores">Cores it was charged for, when known.</param>
/// <param name="Name">Job name, when known.</param>
/// <param name="Source">Where the final information came from (for example "scontrol", "sacct", "jobcomp file").</param>
/// <param name="WorkingDirectory">The folder the job ran in, when the batch system says (it tells whose job it is).</param>
public sealed record JobStatus(
    string JobId,
    JobState State,
    string NativeState,
    int? ExitCode = null,
    int? Signal = null,
    TimeSpan? Elapsed = null,
    int? ChargedCores = null,
    string? Name = null,
    string? Source = null,
    string? WorkingDirectory = null)
{
    /// <summary>A job the batch system does not know.</summary>
    public static JobStatus MissingFor(string jobId) => new(jobId, JobState.Vanished, "not found");
}
