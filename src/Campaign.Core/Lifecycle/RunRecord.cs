using Campaign.Core.Domain;
using Campaign.Core.Tracking;

namespace Campaign.Core.Lifecycle;

/// <summary>A tracked run as the rest of the campaign sees it (typed: enums and times, mapped once by the store).</summary>
/// <param name="RunId">Run id.</param>
/// <param name="ConfigId">Configuration id.</param>
/// <param name="Level">Resolution level.</param>
/// <param name="Cluster">Cluster it runs on.</param>
/// <param name="Cores">Cores per job.</param>
/// <param name="Configuration">The binary's physics.</param>
/// <param name="TargetLength">Simulated length (M) it must reach.</param>
/// <param name="State">Its state.</param>
/// <param name="Reason">Why it is held, waiting or failed.</param>
/// <param name="Rehearsal">A rehearsal: its own kind of run, never a plan run done and never a run log.</param>
/// <param name="Progress">Simulated time reached (M).</param>
/// <param name="FinishedAt">When it finished.</param>
public sealed record RunRecord(
    string RunId,
    string ConfigId,
    int Level,
    string Cluster,
    int Cores,
    BinaryConfiguration Configuration,
    double TargetLength,
    RunState State,
    string Reason,
    bool Rehearsal,
    double Progress,
    DateTimeOffset? FinishedAt)
{
    /// <summary>Share of the target length done, in [0, 1].</summary>
    public double DoneFraction => TargetLength > 0 ? Math.Clamp(Progress / TargetLength, 0, 1) : 0;
}

/// <summary>Where a job leg is in its life.</summary>
public enum LegPhase
{
    /// <summary>Recorded, not yet known to have reached the batch system.</summary>
    Intent,

    /// <summary>Known to the batch system (queued or running).</summary>
    Submitted,

    /// <summary>Over, with its charge recorded.</summary>
    Ended,
}

/// <summary>What a job leg means for the budget.</summary>
/// <param name="RunId">Its run.</param>
/// <param name="Cluster">The cluster it is charged on.</param>
/// <param name="Phase">Intent, submitted or ended.</param>
/// <param name="WorstCase">Charged core-hours if it runs its whole wall time (committed while open).</param>
/// <param name="Charged">Charged core-hours once ended.</param>
/// <param name="SubmittedAt">When it was submitted.</param>
/// <param name="StartedAt">When it was first seen running.</param>
/// <param name="EndedAt">When it ended.</param>
public sealed record LegCharge(string RunId, string Cluster, LegPhase Phase, double WorstCase, double? Charged, DateTimeOffset SubmittedAt, DateTimeOffset? StartedAt, DateTimeOffset? EndedAt)
{
    /// <summary>True until it has ended.</summary>
    public bool IsOpen => Phase != LegPhase.Ended;
}

/// <summary>One state change of a run, as the event log keeps it.</summary>
/// <param name="Id">Event number.</param>
/// <param name="At">When (ISO 8601).</param>
/// <param name="RunId">The run.</param>
/// <param name="FromState">State before.</param>
/// <param name="ToState">State after (the same when only something was noted).</param>
/// <param name="Why">What happened.</param>
public sealed record RunEvent(long Id, string At, string RunId, string FromState, string ToState, string Why);

/// <summary>A cluster whose batch system could not be used, since when, and the first line of what it said.</summary>
/// <param name="Cluster">Cluster.</param>
/// <param name="Since">First cycle it failed in (in this spell).</param>
/// <param name="LastAt">Latest cycle it failed in.</param>
/// <param name="Message">First line of the batch system's error (the whole text is in the event log).</param>
public sealed record ClusterFault(string Cluster, DateTimeOffset Since, DateTimeOffset LastAt, string Message);
