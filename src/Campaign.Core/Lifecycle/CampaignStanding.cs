using System.Globalization;
using Campaign.Core.Tracking;

namespace Campaign.Core.Lifecycle;

/// <summary>Where a plan run stands, derived from the tracked runs (never stored).</summary>
public enum PlanRunStatus
{
    /// <summary>Not tracked yet: still to come.</summary>
    ToCome,

    /// <summary>Tracked and being worked on (waiting for its next leg, queued or running).</summary>
    Active,

    /// <summary>Tracked and held for a human.</summary>
    Held,

    /// <summary>Reached its target.</summary>
    Finished,

    /// <summary>Given up.</summary>
    Abandoned,
}

/// <summary>A plan run with the real tracked run behind it, if any.</summary>
/// <param name="Entry">The plan row.</param>
/// <param name="Run">Its real tracked run (never a rehearsal), or null.</param>
/// <param name="Status">Derived status.</param>
public sealed record PlanRunStanding(PlanEntry Entry, RunRecord? Run, PlanRunStatus Status)
{
    /// <summary>True while it still has work to do (to come, active or held).</summary>
    public bool IsLeft => Status is PlanRunStatus.ToCome or PlanRunStatus.Active or PlanRunStatus.Held;

    /// <summary>True once a real run of it is tracked.</summary>
    public bool IsStarted => Status != PlanRunStatus.ToCome;

    /// <summary>The cluster it runs (or will run) on.</summary>
    public string Cluster => Run?.Cluster ?? Entry.Cluster;

    /// <summary>
    /// Charged core-hours still expected at the plan's quantile: the planned cost when to come, the planned cost
    /// scaled by the share of the length not yet done when tracked, nothing once finished or given up.
    /// </summary>
    public double RemainingCost => Status switch
    {
        PlanRunStatus.ToCome => Entry.Cost,
        PlanRunStatus.Active or PlanRunStatus.Held => Entry.Cost * (1 - Run!.DoneFraction),
        _ => 0,
    };
}

/// <summary>
/// The campaign's one state, derived: each run of a plan is to come, active, held, finished or abandoned according
/// to the real tracked run of the same configuration and level. Rehearsals never count. Nothing here is stored.
/// </summary>
public sealed class CampaignStanding
{
    private CampaignStanding(PlanVersion? plan, IReadOnlyList<PlanRunStanding> runs, IReadOnlyList<PlanEntry> trials, IReadOnlyList<RunRecord> outside, IReadOnlyList<RunRecord> rehearsals)
    {
        Plan = plan;
        Runs = runs;
        Trials = trials;
        OutsidePlan = outside;
        Rehearsals = rehearsals;
    }

    /// <summary>The plan it was derived from (null before any plan).</summary>
    public PlanVersion? Plan { get; }

    /// <summary>Every production run of the plan with its status.</summary>
    public IReadOnlyList<PlanRunStanding> Runs { get; }

    /// <summary>The plan's eccentricity-trial rows.</summary>
    public IReadOnlyList<PlanEntry> Trials { get; }

    /// <summary>Real tracked runs that are not in the plan (tracked from a plan version before a re-plan that could not carry them).</summary>
    public IReadOnlyList<RunRecord> OutsidePlan { get; }

    /// <summary>Rehearsal runs (their own kind: they never make a plan run done).</summary>
    public IReadOnlyList<RunRecord> Rehearsals { get; }

    /// <summary>Plan runs that still have work to do.</summary>
    public IReadOnlyList<PlanRunStanding> Left => Runs.Where(r => r.IsLeft).ToList();

    /// <summary>Derives the standing of <paramref name="plan"/> from <paramref name="runs"/>.</summary>
    public static CampaignStanding Of(PlanVersion? plan, IReadOnlyList<RunRecord> runs)
    {
        var real = runs.Where(r => !r.Rehearsal).ToDictionary(r => r.RunId, StringComparer.Ordinal);
        var standings = new List<PlanRunStanding>();
        var inPlan = new HashSet<string>(StringComparer.Ordinal);
        foreach (var entry in plan?.Runs ?? Enumerable.Empty<PlanEntry>())
        {
            inPlan.Add(entry.RunId);
            var run = real.GetValueOrDefault(entry.RunId);
            standings.Add(new PlanRunStanding(entry, run, StatusOf(run)));
        }

        return new CampaignStanding(
            plan,
            standings,
            plan?.Entries.Where(e => e.Kind == PlanEntryKind.Trials).ToList() ?? new List<PlanEntry>(),
            real.Values.Where(r => !inPlan.Contains(r.RunId)).OrderBy(r => r.RunId, StringComparer.Ordinal).ToList(),
            runs.Where(r => r.Rehearsal).ToList());
    }

    /// <summary>The derived status of a plan run whose real run is <paramref name="run"/>.</summary>
    public static PlanRunStatus StatusOf(RunRecord? run) => run?.State switch
    {
        null => PlanRunStatus.ToCome,
        RunState.Finished => PlanRunStatus.Finished,
        RunState.Failed => PlanRunStatus.Abandoned,
        RunState.Held => PlanRunStatus.Held,
        _ => PlanRunStatus.Active,
    };

    /// <summary>
    /// The configurations a re-plan must keep: every one with a real run that has started and was not given up.
    /// They stay in the new plan whole (their levels still to come too), at their remaining cost.
    /// </summary>
    public IReadOnlyList<CarriedConfiguration> Started()
    {
        var carried = new List<CarriedConfiguration>();
        foreach (var config in Runs.GroupBy(r => r.Entry.ConfigId, StringComparer.Ordinal))
        {
            if (!config.Any(r => r.IsStarted && r.Status != PlanRunStatus.Abandoned))
            {
                continue;
            }

            var counts = config.GroupBy(r => r.Status).OrderBy(g => g.Key).Select(g => $"{g.Count().ToString(CultureInfo.InvariantCulture)} {Describe(g.Key)}");
            var cluster = config.First(r => r.IsStarted).Cluster;
            carried.Add(new CarriedConfiguration(config.Key, cluster, config.Sum(r => r.RemainingCost), string.Join(", ", counts)));
        }

        return carried;
    }

    /// <summary>What the carried configurations still need, per cluster they run on.</summary>
    public IReadOnlyDictionary<string, double> RemainingOf(IReadOnlyCollection<string> configIds) =>
        Runs.Where(r => configIds.Contains(r.Entry.ConfigId))
            .GroupBy(r => r.Cluster, StringComparer.Ordinal)
            .ToDictionary(g => g.Key, g => g.Sum(r => r.RemainingCost), StringComparer.Ordinal);

    /// <summary>The entries of <paramref name="configIds"/> in the plan (runs and trials), for carrying them over.</summary>
    public IReadOnlyList<PlanEntry> EntriesOf(IReadOnlyCollection<string> configIds) =>
        Plan?.Entries.Where(e => configIds.Contains(e.ConfigId)).ToList() ?? new List<PlanEntry>();

    private static string Describe(PlanRunStatus status) => status switch
    {
        PlanRunStatus.ToCome => "to come",
        PlanRunStatus.Active => "active",
        PlanRunStatus.Held => "held",
        PlanRunStatus.Finished => "finished",
        _ => "given up",
    };
}
