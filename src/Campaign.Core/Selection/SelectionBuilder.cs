using Campaign.Core.CostModel;
using Campaign.Core.Domain;
using Campaign.Core.Physics;

namespace Campaign.Core.Selection;

/// <summary>How to build a selection problem from candidates.</summary>
/// <param name="Objective">What to maximise.</param>
/// <param name="Quantile">Cost quantile charged against the budget (0.5 = median; 0.8 or 0.9 for a risk-averse plan).</param>
/// <param name="Budget">One budget in charged core-hours for every cluster, or null to use <paramref name="Allocations"/>.</param>
/// <param name="Allocations">Charged core-hours per cluster (one pool each), used when <paramref name="Budget"/> is null.</param>
/// <param name="Exclude">Candidate ids never to choose.</param>
/// <param name="MaxRuns">Most configurations to choose.</param>
/// <param name="Reserved">Budget already gone per cluster: spent so far and what the started runs still need (taken off before choosing).</param>
public sealed record SelectionRequest(
    SelectionObjective Objective,
    double Quantile,
    double? Budget,
    IReadOnlyDictionary<string, double> Allocations,
    IReadOnlySet<string> Exclude,
    int? MaxRuns,
    IReadOnlyDictionary<string, double>? Reserved = null);

/// <summary>A candidate as the selector sees it, with the estimate rows behind each of its options.</summary>
public sealed record SelectionEntry(Candidate Candidate, IReadOnlyList<IReadOnlyList<EstimateRow>> OptionRows);

/// <summary>A built problem and what it was built from.</summary>
/// <param name="Problem">The problem for <see cref="Selector"/>.</param>
/// <param name="Entries">One per problem candidate, same order.</param>
/// <param name="Dropped">Candidates left out before selection, with the reason.</param>
public sealed record BuiltSelection(SelectionProblem Problem, IReadOnlyList<SelectionEntry> Entries, IReadOnlyList<(string Id, string Reason)> Dropped);

/// <summary>Turns candidates, the cost model and budgets into a <see cref="SelectionProblem"/>.</summary>
public static class SelectionBuilder
{
    /// <summary>
    /// Builds the problem: every configuration is costed with all its levels (and eccentricity trials, when
    /// asked) on every cluster it may use that has a budget, in charged core-hours at the requested quantile.
    /// </summary>
    public static BuiltSelection Build(
        IReadOnlyList<Candidate> candidates,
        IReadOnlyDictionary<string, ClusterProfile> clusters,
        FittedCostModel? model,
        StorageModel storage,
        LengthSettings length,
        EstimateOptions estimateOptions,
        ParameterSpace space,
        IReadOnlyList<BinaryConfiguration> existing,
        SelectionRequest request)
    {
        var checks = new FieldChecks();
        checks.InRange("--quantile", request.Quantile, 0.5, 0.99);
        if (request.Budget is { } b)
        {
            checks.Positive("--budget", b, 1e12);
        }

        if (request.MaxRuns is { } cap)
        {
            checks.InRange("--max-runs", cap, 1, 1_000_000);
        }

        foreach (var id in request.Exclude.Where(id => candidates.All(c => c.Id != id)))
        {
            checks.Add("--exclude", id, "ids of candidates in the file");
        }

        checks.ThrowIfAny();

        var reserved = request.Reserved ?? new Dictionary<string, double>();
        var pools = request.Budget is { } budget
            ? new List<BudgetPool> { new("budget", Math.Max(0, budget - reserved.Values.Sum())) }
            : request.Allocations.OrderBy(a => a.Key, StringComparer.Ordinal).Select(a => new BudgetPool(a.Key, Math.Max(0, a.Value - reserved.GetValueOrDefault(a.Key)))).ToList();
        if (pools.Count == 0)
        {
            throw new InvalidInputException(new[] { "no budget: expected --budget CORE_HOURS, or [[allocation]] entries in campaign.toml" });
        }

        int? PoolOf(string cluster) => request.Budget is not null ? 0 : pools.FindIndex(p => p.Name == cluster) is var i and >= 0 ? i : null;

        var kept = candidates.Where(c => !request.Exclude.Contains(c.Id)).ToList();
        var dropped = new List<(string, string)>();
        var copies = new List<(int Candidate, string Cluster, Candidate Copy)>();
        for (var k = 0; k < kept.Count; k++)
        {
            var c = kept[k];
            var allowed = c.Clusters.ToArray();
            foreach (var m in allowed.Where(m => PoolOf(m) is not null))
            {
                copies.Add((k, m, c with { Id = c.Id + "@" + m, Cluster = m, Clusters = new[] { m } }));
            }
        }

        var estimate = ProposalEstimator.Estimate(copies.Select(x => x.Copy).ToList(), clusters, model, storage, length, estimateOptions with { Samples = 100 });
        var rowsByCopy = estimate.Runs.GroupBy(r => r.Id).ToDictionary(g => g.Key, g => (IReadOnlyList<EstimateRow>)g.ToList());
        var selectionCandidates = new List<SelectionCandidate>();
        var entries = new List<SelectionEntry>();
        for (var k = 0; k < kept.Count; k++)
        {
            var c = kept[k];
            var mine = copies.Where(x => x.Candidate == k).ToList();
            if (mine.Count == 0)
            {
                var reason = $"no budget on its clusters ({string.Join(", ", c.Clusters)})";
                if (c.Must)
                {
                    throw new InvalidInputException(new[] { $"{c.Id}: must run, but {reason}: expected an allocation for one of its clusters, or --budget" });
                }

                dropped.Add((c.Id, reason));
                continue;
            }

            var options = mine.Select(x =>
            {
                var rows = rowsByCopy[x.Copy.Id];
                return new SelectionOption(PoolOf(x.Cluster)!.Value, x.Cluster, rows.Sum(r => r.ChargedAt(request.Quantile)), rows.Sum(r => r.ChargedCoreHours), rows.Sum(r => r.ChargedHigh));
            }).ToList();
            selectionCandidates.Add(new SelectionCandidate(c.Id, space.Coordinates(c.Spec.Configuration), c.Value, c.Must, options));
            entries.Add(new SelectionEntry(c, mine.Select(x => rowsByCopy[x.Copy.Id]).ToList()));
        }

        var problem = new SelectionProblem(selectionCandidates, existing.Select(space.Coordinates).ToList(), pools, request.MaxRuns, request.Objective);
        return new BuiltSelection(problem, entries, dropped);
    }
}
