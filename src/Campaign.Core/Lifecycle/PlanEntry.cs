using Campaign.Core.CostModel;
using Campaign.Core.Domain;

namespace Campaign.Core.Lifecycle;

/// <summary>What a plan row stands for.</summary>
public enum PlanEntryKind
{
    /// <summary>A production run: one configuration at one resolution level.</summary>
    Run,

    /// <summary>The eccentricity-reduction trials of a configuration (a cost, not a tracked run).</summary>
    Trials,
}

/// <summary>
/// One row of a plan: a configuration at one level (or its trials), with the estimate it was chosen on, kept as
/// it was when the plan was saved so that nothing is approximated later.
/// </summary>
/// <param name="Configuration">The binary's physics.</param>
/// <param name="Estimate">The estimate row (cluster, cores, core-hours with the interval, wall hours, legs, charges, storage).</param>
/// <param name="Cost">Charged core-hours at the plan's quantile (what the selection charged against the budget).</param>
/// <param name="TargetLength">Simulated length (M) the run must reach, or null for a row migrated from an older plan (computed at adoption).</param>
public sealed record PlanEntry(BinaryConfiguration Configuration, EstimateRow Estimate, double Cost, double? TargetLength)
{
    /// <summary>Configuration id.</summary>
    public string ConfigId => Estimate.Id;

    /// <summary>Resolution level.</summary>
    public int Level => Estimate.Level;

    /// <summary>Run or trials.</summary>
    public PlanEntryKind Kind => Estimate.Kind == "ecc" ? PlanEntryKind.Trials : PlanEntryKind.Run;

    /// <summary>Cluster it was planned on.</summary>
    public string Cluster => Estimate.Cluster;

    /// <summary>Cores per job.</summary>
    public int Cores => Estimate.Cores;

    /// <summary>The id a real tracked run of this row has.</summary>
    public string RunId => RunIds.For(ConfigId, Level);
}

/// <summary>A configuration a re-plan kept because it had started, with what was left of it.</summary>
/// <param name="ConfigId">Configuration id.</param>
/// <param name="Cluster">Cluster its remaining cost is charged to.</param>
/// <param name="RemainingCost">Charged core-hours still expected at the plan's quantile.</param>
/// <param name="Why">What had happened to it (for example "2 of 3 levels running, 1 finished").</param>
public sealed record CarriedConfiguration(string ConfigId, string Cluster, double RemainingCost, string Why);

/// <summary>A stored plan version.</summary>
/// <param name="Id">Version number.</param>
/// <param name="CreatedAt">When it was saved.</param>
/// <param name="Objective">coverage or value.</param>
/// <param name="Quantile">Cost quantile of <see cref="PlanEntry.Cost"/>.</param>
/// <param name="Value">The objective's value.</param>
/// <param name="UpperBound">Upper bound on the best possible objective.</param>
/// <param name="Method">How it was solved.</param>
/// <param name="Source">The candidate file.</param>
/// <param name="Entries">Its rows (chosen and carried over).</param>
/// <param name="Carried">Configurations carried over from the previous plan because they had started.</param>
/// <param name="Reserved">Charged core-hours taken off each budget before choosing: spent so far plus what the carried runs still need.</param>
public sealed record PlanVersion(
    long Id,
    DateTimeOffset CreatedAt,
    string Objective,
    double Quantile,
    double Value,
    double UpperBound,
    string Method,
    string Source,
    IReadOnlyList<PlanEntry> Entries,
    IReadOnlyList<CarriedConfiguration> Carried,
    IReadOnlyDictionary<string, double> Reserved)
{
    /// <summary>The production-run rows (no trials).</summary>
    public IEnumerable<PlanEntry> Runs => Entries.Where(e => e.Kind == PlanEntryKind.Run);

    /// <summary>Configuration ids in the plan, in order.</summary>
    public IReadOnlyList<string> ConfigIds => Entries.Select(e => e.ConfigId).Distinct(StringComparer.Ordinal).ToList();
}
