namespace Campaign.Core.Domain;

/// <summary>How a logged run ended.</summary>
public enum RunOutcome
{
    /// <summary>Reached the planned end.</summary>
    Completed,

    /// <summary>Failed and was abandoned.</summary>
    Failed,

    /// <summary>Stopped before the end (still useful: its cost up to t_end).</summary>
    Partial,
}

/// <summary>One past simulation (one configuration at one resolution level) from the group's run logs.</summary>
/// <param name="RunId">Unique id.</param>
/// <param name="Configuration">Physics of the run.</param>
/// <param name="Level">Resolution level.</param>
/// <param name="Cores">Cores per job.</param>
/// <param name="Cluster">Cluster it ran on.</param>
/// <param name="WallHours">Total wall-clock hours over all its legs.</param>
/// <param name="Outcome">How it ended.</param>
/// <param name="CoreHours">Charged core-hours, when known.</param>
/// <param name="TEnd">Simulated length reached (M), when known.</param>
/// <param name="Orbits">Orbits simulated, when known.</param>
/// <param name="Legs">Number of job legs, when known.</param>
/// <param name="CheckpointGb">Size of one checkpoint (GB), when known.</param>
/// <param name="OutputGb">Total output kept (GB), when known.</param>
/// <param name="Started">Start time, when known.</param>
/// <param name="Finished">End time, when known.</param>
public sealed record RunLog(
    string RunId,
    BinaryConfiguration Configuration,
    int Level,
    int Cores,
    string Cluster,
    double WallHours,
    RunOutcome Outcome,
    double? CoreHours = null,
    double? TEnd = null,
    double? Orbits = null,
    int? Legs = null,
    double? CheckpointGb = null,
    double? OutputGb = null,
    DateTimeOffset? Started = null,
    DateTimeOffset? Finished = null)
{
    /// <summary>Core-hours consumed: wall hours x cores (before any site charging rule).</summary>
    public double ConsumedCoreHours => WallHours * Cores;
}
