using Campaign.Core.Lifecycle;
using Campaign.Store;

namespace Campaign.App;

/// <summary>
/// The campaign's state as read in one go: the current plan, the tracked runs (typed), every leg's charge,
/// and what is derived from them (the standing of each plan run, the ledger of spending). Nothing derived is stored.
/// </summary>
/// <param name="Plan">The current plan, or null.</param>
/// <param name="Runs">Every tracked run.</param>
/// <param name="Legs">Every leg's charge or commitment.</param>
/// <param name="Standing">Where each plan run stands.</param>
/// <param name="Ledger">Spent, committed and left per allocation and window.</param>
internal sealed record CampaignSnapshot(PlanVersion? Plan, IReadOnlyList<RunRecord> Runs, IReadOnlyList<LegCharge> Legs, CampaignStanding Standing, CampaignLedger Ledger)
{
    /// <summary>Reads the snapshot of an open workspace.</summary>
    public static CampaignSnapshot Load(Workspace workspace)
    {
        var plan = PlanStore.Current(workspace.Connection);
        var runs = TrackingStore.Records(workspace.Connection);
        var legs = TrackingStore.Charges(workspace.Connection);
        var standing = CampaignStanding.Of(plan, runs);
        if (plan is not null && standing.OutsidePlan.Count > 0)
        {
            // Runs tracked from an older plan version that the current one does not hold: their rows come from the
            // newest version that had them, so they are still counted (never lost).
            var older = PlanStore.NewestEntries(workspace.Connection, standing.OutsidePlan.Select(r => (r.ConfigId, r.Level)).ToList());
            plan = plan with { Entries = plan.Entries.Concat(older).ToList() };
            standing = CampaignStanding.Of(plan, runs);
        }

        return new CampaignSnapshot(plan, runs, legs, standing, new CampaignLedger(workspace.Config.Allocations, workspace.Clusters, legs));
    }

    /// <summary>Worst-case charge of each run's open legs.</summary>
    public IReadOnlyDictionary<string, double> CommittedByRun() =>
        Legs.Where(s => s.IsOpen).GroupBy(s => s.RunId, StringComparer.Ordinal).ToDictionary(g => g.Key, g => g.Sum(s => s.WorstCase), StringComparer.Ordinal);
}
