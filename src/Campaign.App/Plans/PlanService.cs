using Campaign.Core.Lifecycle;
using Campaign.Core.CostModel;
using Campaign.Core.Domain;
using Campaign.Core.Selection;
using Campaign.Core.Tracking;
using Campaign.Store;

namespace Campaign.App.Plans;

/// <summary>What to select, and whether to save it as the plan.</summary>
/// <param name="Workspace">Workspace folder.</param>
/// <param name="Path">Candidate file.</param>
/// <param name="Shown">Its name as the user gave it.</param>
/// <param name="Objective">Coverage or value.</param>
/// <param name="Budget">One budget for all clusters (charged core-hours, the whole campaign's), or null for the allocations.</param>
/// <param name="Quantile">Cost quantile charged against the budget.</param>
/// <param name="Exclude">Candidate ids never to choose.</param>
/// <param name="MaxRuns">Most configurations to choose.</param>
/// <param name="EccentricityTrials">Trial runs per configuration included in its cost.</param>
/// <param name="EccentricityTrialLength">Simulated length of each trial (M).</param>
/// <param name="LeftOut">How many of the best left-out candidates to report.</param>
/// <param name="Save">Store the selection as a new plan version.</param>
/// <param name="Withdraw">Withdraw the tracked configurations that <paramref name="Exclude"/> names: their runs are
/// given up (open jobs cancelled by the next cycle) instead of carried over. Without it, excluding a tracked
/// configuration is refused.</param>
public sealed record SelectRequest(
    string Workspace,
    string Path,
    string Shown,
    SelectionObjective Objective,
    double? Budget,
    double Quantile,
    IReadOnlyList<string> Exclude,
    int? MaxRuns,
    int EccentricityTrials,
    double EccentricityTrialLength,
    int LeftOut,
    bool Save,
    bool Withdraw = false);

/// <summary>A selection and, when saved, the plan it became.</summary>
/// <param name="Request">The selection request as the selector saw it.</param>
/// <param name="Built">The problem and its candidates.</param>
/// <param name="Result">The chosen set with its bound.</param>
/// <param name="Report">Chosen runs, budget use, best left out.</param>
/// <param name="Existing">Configurations that already count as covered (completed logs and carried runs).</param>
/// <param name="Carried">Configurations kept because they had started, with what they still need.</param>
/// <param name="Reserved">Charged core-hours taken off each budget before choosing: spent plus what the started runs still need.</param>
/// <param name="PlanId">The new plan's version, when saved.</param>
/// <param name="Withdrawn">Runs withdrawn from the campaign (given up) by this re-plan.</param>
public sealed record SelectResult(
    SelectionRequest Request,
    BuiltSelection Built,
    SelectionResult Result,
    SelectionReport Report,
    int Existing,
    IReadOnlyList<CarriedConfiguration> Carried,
    IReadOnlyDictionary<string, double> Reserved,
    long? PlanId,
    IReadOnlyList<string>? Withdrawn = null);

/// <summary>
/// Choosing what to run within the budget, and saving it as the plan. A re-plan keeps every configuration that has
/// started (at what it still needs), takes what was spent off the budget, and says what it carried over.
/// </summary>
public sealed class PlanService
{
    private readonly TimeProvider _time;

    /// <summary>Creates the service.</summary>
    public PlanService(TimeProvider time) => _time = time;

    /// <summary>The current plan, or null.</summary>
    public PlanVersion? Current(string workspaceRoot)
    {
        using var workspace = Workspace.Open(workspaceRoot, _time);
        return PlanStore.Current(workspace.Connection);
    }

    /// <summary>Selects from the candidate file; with <see cref="SelectRequest.Save"/>, stores the plan.</summary>
    public SelectResult Select(SelectRequest request, IProgress<double>? progress = null)
    {
        using var workspace = Workspace.Open(request.Workspace, _time);
        var config = workspace.Config;
        var candidates = CampaignInputs.Candidates(workspace, request.Path, request.Shown);
        var inputs = CampaignInputs.Load(workspace);
        var snapshot = CampaignSnapshot.Load(workspace);

        var carried = Carry(snapshot);

        // A tracked configuration the user excludes leaves the campaign only when asked to (--withdraw).
        var excludedTracked = carried.Where(c => request.Exclude.Contains(c.ConfigId) && snapshot.Standing.Runs.Any(r => r.Entry.ConfigId == c.ConfigId && r.IsLeft && r.Run is not null)).ToList();
        if (excludedTracked.Count > 0 && !request.Withdraw)
        {
            throw new InvalidInputException(excludedTracked.Select(c => $"--exclude {c.ConfigId}: it is tracked ({c.Why}): expected --withdraw to withdraw it from the campaign (its runs are given up and their jobs cancelled by the next cycle), or leave it out of --exclude to keep it").ToList());
        }

        var withdrawn = excludedTracked.Select(c => c.ConfigId).ToHashSet(StringComparer.Ordinal);
        carried = carried.Where(c => !withdrawn.Contains(c.ConfigId) || snapshot.Standing.Runs.Any(r => r.Entry.ConfigId == c.ConfigId && r.Status == PlanRunStatus.Finished))
            .Select(c => withdrawn.Contains(c.ConfigId) ? c with { RemainingCost = 0, Why = c.Why + "; the rest withdrawn" } : c)
            .ToList();
        var carriedIds = carried.Select(c => c.ConfigId).ToHashSet(StringComparer.Ordinal);
        var allocations = CampaignInputs.Allocations(workspace);
        var reserved = Reserved(snapshot, carried, allocations.Keys, request.Budget is not null, workspace.Clusters.Keys);
        var existing = inputs.Logs.Where(l => l.Outcome == RunOutcome.Completed).Select(l => l.Configuration)
            .Concat(snapshot.Standing.EntriesOf(carriedIds).Select(e => e.Configuration))
            .Distinct()
            .ToList();
        // Configurations given up (every real run of them abandoned) are not chosen again unless a human tracks them anew.
        var givenUp = snapshot.Standing.Runs.GroupBy(r => r.Entry.ConfigId, StringComparer.Ordinal)
            .Where(g => !carriedIds.Contains(g.Key) && g.Any(r => r.Status == PlanRunStatus.Abandoned))
            .Select(g => g.Key)
            .ToHashSet(StringComparer.Ordinal);
        var selection = new SelectionRequest(
            request.Objective,
            request.Quantile,
            request.Budget,
            allocations,
            request.Exclude.Where(id => !carriedIds.Contains(id) && !givenUp.Contains(id) && !withdrawn.Contains(id)).ToHashSet(StringComparer.Ordinal),
            request.MaxRuns is { } cap and >= 1 ? Math.Max(1, cap - carried.Count) : request.MaxRuns, // the carried count against the cap; a bad cap is refused by the builder
            reserved);
        var estimateOptions = new EstimateOptions { EccentricityTrials = request.EccentricityTrials, EccentricityTrialLength = request.EccentricityTrialLength };
        var open = candidates.Where(c => !carriedIds.Contains(c.Id) && !givenUp.Contains(c.Id) && !withdrawn.Contains(c.Id)).ToList();
        var built = SelectionBuilder.Build(open, workspace.Clusters, inputs.Model?.Model, inputs.Storage, inputs.Length, estimateOptions, config.Selection, existing, selection);
        built = built with { Dropped = built.Dropped.Concat(candidates.Where(c => givenUp.Contains(c.Id)).Select(c => (c.Id, "given up in this campaign (abandoned)"))).ToList() };
        var result = Selector.Solve(built.Problem, progress);
        var report = SelectionReport.Of(built.Problem, result, request.LeftOut);
        long? planId = null;
        if (request.Save)
        {
            var entries = Chosen(built, result, request.Quantile).Concat(snapshot.Standing.EntriesOf(carriedIds)).ToList();
            var draft = new PlanDraft(request.Objective.ToString().ToLowerInvariant(), request.Quantile, result.Objective, result.UpperBound, result.Method, request.Shown, entries, carried, reserved, report.Pools);
            planId = PlanStore.Save(workspace.Connection, draft, _time);
            WithdrawRuns(workspace, withdrawn, planId.Value);
        }

        var withdrawnRuns = snapshot.Runs.Where(r => !r.Rehearsal && withdrawn.Contains(r.ConfigId) && r.State is not (RunState.Finished or RunState.Failed)).Select(r => r.RunId).ToList();
        return new SelectResult(selection, built, result, report, existing.Count, carried, reserved, planId, withdrawnRuns);
    }

    /// <summary>
    /// Gives up the unfinished real runs of withdrawn configurations, in one transaction: their open jobs are marked
    /// for cancelling, which the next cycle does (an unconfirmed submission is cancelled when it turns up).
    /// </summary>
    private void WithdrawRuns(Workspace workspace, IReadOnlySet<string> configs, long planId)
    {
        if (configs.Count == 0)
        {
            return;
        }

        var at = _time.GetUtcNow();
        using var tx = workspace.Connection.BeginTransaction();
        foreach (var run in TrackingStore.Runs(workspace.Connection, tx).Where(r => !r.Rehearsal && configs.Contains(r.ConfigId) && r.State is not (RunState.Finished or RunState.Failed)))
        {
            foreach (var leg in TrackingStore.LegsOf(workspace.Connection, run.RunId, tx).Where(s => s.Phase == LegPhase.Submitted))
            {
                leg.CancelFor("withdrawn");
                TrackingStore.Save(workspace.Connection, tx, leg);
            }

            TrackingStore.Save(workspace.Connection, tx, run, run.Abandon(at, $"withdrawn from the campaign by plan {planId.ToString(System.Globalization.CultureInfo.InvariantCulture)}"));
        }

        tx.Commit();
    }

    /// <summary>The chosen configurations as plan rows: one per level (and the trials), with their estimate.</summary>
    private static IEnumerable<PlanEntry> Chosen(BuiltSelection built, SelectionResult result, double quantile)
    {
        foreach (var a in result.Chosen)
        {
            var entry = built.Entries[a.Candidate];
            foreach (var row in entry.OptionRows[a.Option])
            {
                var estimate = row with { Id = entry.Candidate.Id };
                yield return new PlanEntry(entry.Candidate.Spec.Configuration, estimate, row.ChargedAt(quantile), row.Kind == "ecc" ? null : row.LengthM);
            }
        }
    }

    /// <summary>The started configurations, with what each still needs: at least what its open legs have committed.</summary>
    private static IReadOnlyList<CarriedConfiguration> Carry(CampaignSnapshot snapshot)
    {
        var committed = snapshot.CommittedByRun();
        return snapshot.Standing.Started()
            .Select(c => c with
            {
                RemainingCost = snapshot.Standing.Runs.Where(r => r.Entry.ConfigId == c.ConfigId)
                    .Sum(r => Math.Max(r.RemainingCost, r.Run is null ? 0 : committed.GetValueOrDefault(r.Run.RunId))),
            })
            .ToList();
    }

    /// <summary>
    /// What each budget has already lost: charges so far (within the cluster's allocations; all of them for one
    /// overall budget) plus what the carried configurations still need.
    /// </summary>
    private static IReadOnlyDictionary<string, double> Reserved(CampaignSnapshot snapshot, IReadOnlyList<CarriedConfiguration> carried, IEnumerable<string> allocated, bool overall, IEnumerable<string> clusters)
    {
        var reserved = new Dictionary<string, double>(StringComparer.Ordinal);
        foreach (var cluster in overall ? clusters : allocated)
        {
            var spent = overall ? snapshot.Ledger.SpentAll(cluster) : snapshot.Ledger.SpentInAllocations(cluster);
            var need = carried.Where(c => c.Cluster == cluster).Sum(c => c.RemainingCost);
            if (spent + need > 0)
            {
                reserved[cluster] = spent + need;
            }
        }

        return reserved;
    }
}
