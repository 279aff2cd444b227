using Campaign.Core.Domain;

namespace Campaign.Core.Selection;

/// <summary>
/// Chooses candidates within the budget pools. Value objective: exact knapsack (one pool) or branch and bound
/// over assignments (several pools). Coverage objective: lazy greedy by marginal gain per unit of budget, the
/// best single candidate, partial enumeration of seed sets when the problem is small, then a swap local
/// search; with the data-dependent upper bound from submodularity. Algorithms, guarantees and references are
/// in docs/selection.md.
/// </summary>
public static class Selector
{
    /// <summary>Work budget (candidate evaluations x demand points) for partial enumeration.</summary>
    public const double EnumerationWork = 5e7;

    /// <summary>How many of the best unchosen candidates the swap pass tries against each chosen one.</summary>
    public const int SwapCandidates = 50;

    /// <summary>Solves the problem.</summary>
    public static SelectionResult Solve(SelectionProblem problem)
    {
        var n = problem.Candidates.Count;
        var capacity = problem.Pools.Select(p => p.Capacity).ToArray();
        var musts = PlaceMusts(problem, capacity);
        if (problem.Objective == SelectionObjective.Value)
        {
            return SolveValue(problem, musts, capacity);
        }

        return SolveCoverage(problem, musts, capacity);
    }

    private static List<Assignment> PlaceMusts(SelectionProblem problem, double[] capacity)
    {
        var musts = new List<Assignment>();
        var failed = new List<string>();
        for (var j = 0; j < problem.Candidates.Count; j++)
        {
            var c = problem.Candidates[j];
            if (!c.Must)
            {
                continue;
            }

            var best = -1;
            for (var o = 0; o < c.Options.Count; o++)
            {
                var option = c.Options[o];
                if (option.Cost <= capacity[option.Pool] && (best < 0 || option.Cost / problem.Pools[option.Pool].Capacity < c.Options[best].Cost / problem.Pools[c.Options[best].Pool].Capacity))
                {
                    best = o;
                }
            }

            if (best < 0)
            {
                failed.Add(c.Id);
                continue;
            }

            capacity[c.Options[best].Pool] -= c.Options[best].Cost;
            musts.Add(new Assignment(j, best));
        }

        if (failed.Count > 0)
        {
            var mustCost = problem.Candidates.Where(c => c.Must).Sum(c => c.Options.Min(o => o.Cost));
            var budget = problem.Pools.Sum(p => p.Capacity);
            throw new InvalidInputException(new[]
            {
                $"must runs do not fit the budget: {string.Join(", ", failed)} cannot be placed after the other must runs; all must runs together cost at least {FieldProblem.Show(Math.Round(mustCost))} against {FieldProblem.Show(Math.Round(budget))} (overrun {FieldProblem.Show(Math.Round(Math.Max(0, mustCost - budget)))}): expected must runs that fit the budget",
            });
        }

        if (problem.MaxRuns is { } cap && cap < musts.Count)
        {
            throw new InvalidInputException(new[] { $"--max-runs = {cap}: expected at least the {musts.Count} must runs" });
        }

        return musts;
    }

    private static SelectionResult SolveValue(SelectionProblem problem, List<Assignment> musts, double[] capacity)
    {
        var mustValue = musts.Sum(a => problem.Candidates[a.Candidate].Value);
        var free = Enumerable.Range(0, problem.Candidates.Count).Where(j => !problem.Candidates[j].Must).ToArray();
        var slots = problem.MaxRuns is { } cap ? cap - musts.Count : (int?)null;
        if (problem.Pools.Count == 1)
        {
            var cheapest = free.Select(j => CheapestOption(problem.Candidates[j])).ToArray();
            var solution = Knapsack.Solve(
                free.Select(j => problem.Candidates[j].Value).ToArray(),
                free.Select((j, k) => problem.Candidates[j].Options[cheapest[k]].Cost).ToArray(),
                capacity[0],
                slots);
            var chosen = musts.Concat(solution.Items.Select(k => new Assignment(free[k], cheapest[k]))).ToList();
            return new SelectionResult(chosen, mustValue + solution.Value, mustValue + solution.UpperBound, solution.Method, solution.Value == solution.UpperBound ? 1 : 0);
        }

        // Several machines: where a must run goes matters, so the search places must runs too (never leaving them out).
        var original = problem.Pools.Select(p => p.Capacity).ToArray();
        var multi = MultiKnapsack.Solve(problem, Enumerable.Range(0, problem.Candidates.Count).ToArray(), original, problem.MaxRuns);
        return new SelectionResult(multi.Chosen, multi.Value, multi.UpperBound, multi.Method, multi.Value >= multi.UpperBound ? 1 : 0);
    }

    private static int CheapestOption(SelectionCandidate c)
    {
        var best = 0;
        for (var o = 1; o < c.Options.Count; o++)
        {
            if (c.Options[o].Cost < c.Options[best].Cost)
            {
                best = o;
            }
        }

        return best;
    }

    private static SelectionResult SolveCoverage(SelectionProblem problem, List<Assignment> musts, double[] capacity)
    {
        var candidates = problem.Candidates;
        var start = new CoverageFunction(candidates.Select(c => c.Coordinates).ToList(), candidates.Select(c => c.Value).ToList(), problem.Existing);
        foreach (var m in musts)
        {
            start.Add(candidates[m.Candidate].Coordinates);
        }

        var slots = problem.MaxRuns is { } cap ? cap - musts.Count : int.MaxValue;
        var chosenMask = new bool[candidates.Count];
        foreach (var m in musts)
        {
            chosenMask[m.Candidate] = true;
        }

        // 1. Lazy greedy by gain per unit of budget.
        var greedyF = start.Clone();
        var greedy = Greedy(problem, greedyF, (bool[])chosenMask.Clone(), (double[])capacity.Clone(), slots);
        var best = (Set: greedy, Value: greedyF.Value);
        var method = "lazy greedy by gain per cost";

        // 2. The best single affordable candidate.
        if (slots > 0)
        {
            foreach (var (j, o) in FreeOptions(problem, chosenMask, capacity))
            {
                var value = start.Value + start.Gain(candidates[j].Coordinates);
                if (value > best.Value + 1e-12)
                {
                    best = (new List<Assignment> { new(j, o) }, value);
                    method = "best single candidate (beat the greedy)";
                }
            }
        }

        // 3. Partial enumeration: every seed set of up to three (or one) candidates, completed greedily.
        var free = FreeOptions(problem, chosenMask, capacity).ToList();
        var demand = candidates.Count;
        var seedSize = Choose(free.Count, 3) * free.Count * demand <= EnumerationWork ? 3 : (double)free.Count * free.Count * demand <= EnumerationWork ? 1 : 0;
        if (seedSize > 0 && slots > 0)
        {
            foreach (var seed in Seeds(free, seedSize))
            {
                var left = (double[])capacity.Clone();
                var mask = (bool[])chosenMask.Clone();
                var f = start.Clone();
                var feasible = seed.Count <= slots;
                foreach (var (j, o) in seed)
                {
                    var option = candidates[j].Options[o];
                    if (mask[j] || option.Cost > left[option.Pool])
                    {
                        feasible = false;
                        break;
                    }

                    left[option.Pool] -= option.Cost;
                    mask[j] = true;
                    f.Add(candidates[j].Coordinates);
                }

                if (!feasible)
                {
                    continue;
                }

                var completion = Greedy(problem, f, mask, left, slots - seed.Count);
                if (f.Value > best.Value + 1e-12)
                {
                    best = (seed.Select(s => new Assignment(s.Candidate, s.Option)).Concat(completion).ToList(), f.Value);
                    method = $"partial enumeration (seed sets of {seedSize}) with greedy completion";
                }
            }

            if (method == "lazy greedy by gain per cost")
            {
                method = $"lazy greedy, confirmed by partial enumeration of seed sets of {seedSize}";
            }
        }

        // 4. Swap local search within the budget.
        var chosen = musts.Concat(best.Set).ToList();
        var swapped = SwapSearch(problem, start, musts.Count, chosen);
        if (swapped.Improved)
        {
            chosen = swapped.Chosen;
            method += ", improved by swaps";
        }

        var final = CoverageFunction.Evaluate(new CoverageFunction(candidates.Select(c => c.Coordinates).ToList(), candidates.Select(c => c.Value).ToList(), problem.Existing), chosen.Select(a => candidates[a.Candidate].Coordinates));
        var bound = Math.Min(UpperBound(problem, chosen, musts, capacity), UpperBound(problem, musts.Concat(greedy).ToList(), musts, capacity));
        var guarantee = problem.Pools.Count > 1 ? 0 : seedSize == 3 ? 1 - 1 / Math.E : (1 - 1 / Math.E) / 2;
        return new SelectionResult(chosen, final, Math.Max(bound, final), method, guarantee);
    }

    private static double Choose(int n, int k) => k switch
    {
        3 => n * (n - 1.0) * (n - 2.0) / 6,
        _ => n,
    };

    private static IEnumerable<(int Candidate, int Option)> FreeOptions(SelectionProblem problem, bool[] chosen, double[] capacity)
    {
        for (var j = 0; j < problem.Candidates.Count; j++)
        {
            if (chosen[j])
            {
                continue;
            }

            var options = problem.Candidates[j].Options;
            for (var o = 0; o < options.Count; o++)
            {
                if (options[o].Cost <= capacity[options[o].Pool])
                {
                    yield return (j, o);
                }
            }
        }
    }

    private static IEnumerable<List<(int Candidate, int Option)>> Seeds(List<(int Candidate, int Option)> free, int size)
    {
        if (size == 1)
        {
            foreach (var f in free)
            {
                yield return new List<(int, int)> { f };
            }

            yield break;
        }

        // All sets of one, two and three options on distinct candidates.
        for (var a = 0; a < free.Count; a++)
        {
            yield return new List<(int, int)> { free[a] };
            for (var b = a + 1; b < free.Count; b++)
            {
                if (free[b].Candidate == free[a].Candidate)
                {
                    continue;
                }

                yield return new List<(int, int)> { free[a], free[b] };
                for (var c = b + 1; c < free.Count; c++)
                {
                    if (free[c].Candidate == free[a].Candidate || free[c].Candidate == free[b].Candidate)
                    {
                        continue;
                    }

                    yield return new List<(int, int)> { free[a], free[b], free[c] };
                }
            }
        }
    }

    /// <summary>
    /// Lazy greedy (Minoux's accelerated greedy): keys are gain / (cost / pool capacity), upper bounds that
    /// only fall as the set grows, so a popped key that is current is the true best.
    /// </summary>
    private static List<Assignment> Greedy(SelectionProblem problem, CoverageFunction f, bool[] chosen, double[] left, int slots)
    {
        var candidates = problem.Candidates;
        var queue = new PriorityQueue<(int Candidate, int Option, int Round), double>();
        foreach (var (j, o) in FreeOptions(problem, chosen, left))
        {
            queue.Enqueue((j, o, -1), double.NegativeInfinity);
        }

        var picked = new List<Assignment>();
        var round = 0;
        while (picked.Count < slots && queue.TryDequeue(out var item, out _))
        {
            var option = candidates[item.Candidate].Options[item.Option];
            if (chosen[item.Candidate] || option.Cost > left[option.Pool])
            {
                continue;
            }

            if (item.Round != round)
            {
                var gain = f.Gain(candidates[item.Candidate].Coordinates);
                var ratio = gain / Math.Max(option.Cost / problem.Pools[option.Pool].Capacity, 1e-300);
                queue.Enqueue((item.Candidate, item.Option, round), -ratio);
                continue;
            }

            if (f.Gain(candidates[item.Candidate].Coordinates) <= 0)
            {
                break;
            }

            chosen[item.Candidate] = true;
            left[option.Pool] -= option.Cost;
            f.Add(candidates[item.Candidate].Coordinates);
            picked.Add(new Assignment(item.Candidate, item.Option));
            round++;
        }

        return picked;
    }

    private static (bool Improved, List<Assignment> Chosen) SwapSearch(SelectionProblem problem, CoverageFunction start, int mustCount, List<Assignment> chosen)
    {
        var candidates = problem.Candidates;
        var improved = false;
        for (var pass = 0; pass < 3; pass++)
        {
            var current = CoverageFunction.Evaluate(start, chosen.Skip(mustCount).Select(a => candidates[a.Candidate].Coordinates));
            var used = new double[problem.Pools.Count];
            foreach (var a in chosen)
            {
                var o = candidates[a.Candidate].Options[a.Option];
                used[o.Pool] += o.Cost;
            }

            var inSet = chosen.Select(a => a.Candidate).ToHashSet();
            var f = start.Clone();
            foreach (var a in chosen.Skip(mustCount))
            {
                f.Add(candidates[a.Candidate].Coordinates);
            }

            var outside = Enumerable.Range(0, candidates.Count).Where(j => !inSet.Contains(j))
                .SelectMany(j => candidates[j].Options.Select((o, k) => (Candidate: j, Option: k, Ratio: f.Gain(candidates[j].Coordinates) / Math.Max(o.Cost / problem.Pools[o.Pool].Capacity, 1e-300))))
                .OrderByDescending(x => x.Ratio).Take(SwapCandidates).ToList();
            var bestGain = 1e-9;
            (int Out, Assignment In)? bestSwap = null;
            for (var s = mustCount; s < chosen.Count; s++)
            {
                var without = start.Clone();
                for (var t = mustCount; t < chosen.Count; t++)
                {
                    if (t != s)
                    {
                        without.Add(candidates[chosen[t].Candidate].Coordinates);
                    }
                }

                var removed = candidates[chosen[s].Candidate].Options[chosen[s].Option];
                foreach (var (j, o, _) in outside)
                {
                    var option = candidates[j].Options[o];
                    var after = used[option.Pool] + option.Cost - (removed.Pool == option.Pool ? removed.Cost : 0);
                    if (after > problem.Pools[option.Pool].Capacity)
                    {
                        continue;
                    }

                    var value = without.Value + without.Gain(candidates[j].Coordinates);
                    if (value - current > bestGain)
                    {
                        bestGain = value - current;
                        bestSwap = (s, new Assignment(j, o));
                    }
                }
            }

            if (bestSwap is null)
            {
                break;
            }

            chosen = chosen.ToList();
            chosen[bestSwap.Value.Out] = bestSwap.Value.In;
            improved = true;
        }

        return (improved, chosen);
    }

    /// <summary>
    /// Data-dependent bound from submodularity: OPT &lt;= f(S) + max { sum_{j in T} gain_j(S) : T within the
    /// budgets }, relaxed to a fractional knapsack per pool (each candidate may count in every pool it can use,
    /// which only loosens the bound), capped at 1.
    /// </summary>
    private static double UpperBound(SelectionProblem problem, List<Assignment> set, List<Assignment> musts, double[] capacityAfterMusts)
    {
        var candidates = problem.Candidates;
        var f = new CoverageFunction(candidates.Select(c => c.Coordinates).ToList(), candidates.Select(c => c.Value).ToList(), problem.Existing);
        foreach (var a in set)
        {
            f.Add(candidates[a.Candidate].Coordinates);
        }

        var inSet = set.Select(a => a.Candidate).ToHashSet();
        var gains = new double[candidates.Count];
        for (var j = 0; j < candidates.Count; j++)
        {
            gains[j] = inSet.Contains(j) ? 0 : f.Gain(candidates[j].Coordinates);
        }

        var bound = f.Value;
        for (var p = 0; p < problem.Pools.Count; p++)
        {
            var values = new List<double>();
            var costs = new List<double>();
            for (var j = 0; j < candidates.Count; j++)
            {
                if (gains[j] <= 0 || candidates[j].Must)
                {
                    continue;
                }

                var cheapest = candidates[j].Options.Where(o => o.Pool == p).Select(o => o.Cost).DefaultIfEmpty(double.NaN).Min();
                if (!double.IsNaN(cheapest))
                {
                    values.Add(gains[j]);
                    costs.Add(cheapest);
                }
            }

            bound += Knapsack.DantzigBound(values, costs, capacityAfterMusts[p]);
        }

        return Math.Min(1, bound);
    }
}
