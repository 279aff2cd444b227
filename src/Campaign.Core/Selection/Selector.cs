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

    /// <summary>How many of the best unchosen candidates the swap pass tries against as many of the least useful chosen ones.</summary>
    public const int SwapCandidates = 50;



    /// <summary>Solves the problem.</summary>
    public static SelectionResult Solve(SelectionProblem problem, IProgress<double>? progress = null)
    {
        var n = problem.Candidates.Count;
        var capacity = problem.Pools.Select(p => p.Capacity).ToArray();
        var musts = PlaceMusts(problem, capacity);
        if (problem.Objective == SelectionObjective.Value)
        {
            return SolveValue(problem, musts, capacity);
        }

        return SolveCoverage(problem, musts, capacity, progress);
    }

    /// <summary>
    /// The greedy phase alone (from the must runs, no enumeration or swaps): lazy, as <see cref="Solve"/> runs it,
    /// or plain, recomputing every candidate's gain every round. Both pick by gain per share of budget and must
    /// agree; the benchmarks compare their speed.
    /// </summary>
    internal static (List<Assignment> Chosen, double Value) GreedyPhase(SelectionProblem problem, bool lazy)
    {
        var candidates = problem.Candidates;
        var capacity = problem.Pools.Select(p => p.Capacity).ToArray();
        var musts = PlaceMusts(problem, capacity);
        var f = CoverageStart(problem, musts);
        var chosen = new bool[candidates.Count];
        foreach (var m in musts)
        {
            chosen[m.Candidate] = true;
        }

        var slots = problem.MaxRuns is { } cap ? cap - musts.Count : int.MaxValue;
        var reaches = ReachTable(f, candidates);
        if (lazy)
        {
            return (Greedy(problem, f, chosen, capacity, slots, null, reaches), f.Value);
        }

        var picked = new List<Assignment>();
        while (picked.Count < slots)
        {
            var free = FreeOptions(problem, chosen, capacity).ToList();
            if (free.Count == 0)
            {
                break;
            }

            var gains = new double[free.Count];
            Parallel.For(0, free.Count, k => gains[k] = GainOf(f, candidates, reaches, free[k].Candidate));
            var best = -1;
            var bestKey = double.NegativeInfinity;
            for (var k = 0; k < free.Count; k++)
            {
                var option = candidates[free[k].Candidate].Options[free[k].Option];
                var key = gains[k] / Math.Max(option.Cost / problem.Pools[option.Pool].Capacity, 1e-300);
                if (key > bestKey)
                {
                    (best, bestKey) = (k, key);
                }
            }

            if (best < 0 || gains[best] <= 0)
            {
                break;
            }

            var (j, o) = free[best];
            chosen[j] = true;
            capacity[candidates[j].Options[o].Pool] -= candidates[j].Options[o].Cost;
            f.Add(candidates[j].Coordinates);
            picked.Add(new Assignment(j, o));
        }

        return (picked, f.Value);
    }

    /// <summary>The coverage function over the candidates as demand points, with existing runs and the must runs covered.</summary>
    private static CoverageFunction CoverageStart(SelectionProblem problem, IEnumerable<Assignment> musts)
    {
        var candidates = problem.Candidates;
        var f = new CoverageFunction(candidates.Select(c => c.Coordinates).ToList(), candidates.Select(c => c.Value).ToList(), problem.Existing);
        foreach (var m in musts)
        {
            f.Add(candidates[m.Candidate].Coordinates);
        }

        return f;
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

        // Several clusters: where a must run goes matters, so the search places must runs too (never leaving them out).
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

    private static SelectionResult SolveCoverage(SelectionProblem problem, List<Assignment> musts, double[] capacity, IProgress<double>? progress)
    {
        var candidates = problem.Candidates;
        var start = CoverageStart(problem, musts);

        var slots = problem.MaxRuns is { } cap ? cap - musts.Count : int.MaxValue;
        var reaches = ReachTable(start, candidates);
        progress?.Report(0.3);
        var chosenMask = new bool[candidates.Count];
        foreach (var m in musts)
        {
            chosenMask[m.Candidate] = true;
        }

        // 1. Lazy greedy by gain per unit of budget.
        var greedyF = start.Clone();
        var startGains = Enumerable.Repeat(double.NaN, candidates.Count).ToArray();
        var greedy = Greedy(problem, greedyF, (bool[])chosenMask.Clone(), (double[])capacity.Clone(), slots, startGains, reaches);
        var best = (Set: greedy, Value: greedyF.Value);
        var method = "lazy greedy by gain per cost";

        progress?.Report(0.6);

        // 2. The best single affordable candidate.
        if (slots > 0)
        {
            foreach (var (j, o) in FreeOptions(problem, chosenMask, capacity))
            {
                var value = start.Value + (double.IsNaN(startGains[j]) ? start.Gain(candidates[j].Coordinates) : startGains[j]);
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

                var completion = Greedy(problem, f, mask, left, slots - seed.Count, null, reaches);
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

        progress?.Report(0.75);

        // 4. Swap local search within the budget.
        var chosen = musts.Concat(best.Set).ToList();
        var swapped = SwapSearch(problem, start, musts.Count, chosen, reaches);
        if (swapped.Improved)
        {
            chosen = swapped.Chosen;
            method += ", improved by swaps";
        }

        var final = CoverageFunction.Evaluate(new CoverageFunction(candidates.Select(c => c.Coordinates).ToList(), candidates.Select(c => c.Value).ToList(), problem.Existing), chosen.Select(a => candidates[a.Candidate].Coordinates));
        var bound = UpperBound(problem, chosen, capacity, reaches);
        if (reaches is not null || (double)candidates.Count * candidates.Count <= BoundWork)
        {
            bound = Math.Min(bound, UpperBound(problem, musts.Concat(greedy).ToList(), capacity, reaches));
        }
        progress?.Report(1);
        var guarantee = problem.Pools.Count > 1 ? 0 : seedSize == 3 ? 1 - 1 / Math.E : (1 - 1 / Math.E) / 2;
        return new SelectionResult(chosen, final, Math.Max(bound, final), method, guarantee);
    }

    /// <summary>
    /// The reach of every candidate, computed in parallel, when it fits in <see cref="ReachCacheBytes"/>
    /// (estimated from a sample); null otherwise, and gains are then recomputed with a bounded cache.
    /// </summary>
    private static Reach[]? ReachTable(CoverageFunction f, IReadOnlyList<SelectionCandidate> candidates)
    {
        var n = candidates.Count;
        if (n == 0)
        {
            return Array.Empty<Reach>();
        }

        var step = Math.Max(1, n / 32);
        var sample = Enumerable.Range(0, n).Where(j => j % step == 0).Select(j => f.ReachOf(candidates[j].Coordinates).Bytes).Average();
        if (sample * n > ReachCacheBytes)
        {
            return null;
        }

        var table = new Reach[n];
        Parallel.For(0, n, j => table[j] = f.ReachOf(candidates[j].Coordinates));
        return table;
    }

    private static double GainOf(CoverageFunction f, IReadOnlyList<SelectionCandidate> candidates, Reach[]? reaches, int j) =>
        reaches is null ? f.Gain(candidates[j].Coordinates) : f.Gain(reaches[j]);

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

    /// <summary>Largest n x n for which the bound is also computed at the greedy set (the smaller bound is kept).</summary>
    public const double BoundWork = 4e6;

    /// <summary>Largest number of candidates for which the swap search makes more than one pass.</summary>
    public const int SwapMultiPassCandidates = 2000;

    /// <summary>Stale keys re-evaluated together (in parallel) by the lazy greedy.</summary>
    public const int EvaluationBatch = 16;

    /// <summary>Memory the lazy greedy may spend caching which demand points a candidate reaches.</summary>
    public const long ReachCacheBytes = 384L * 1024 * 1024;

    /// <summary>
    /// Lazy greedy (Minoux's accelerated greedy): keys are gain / (cost / pool capacity), upper bounds that
    /// only fall as the set grows, so a popped key that is current is the true best. A candidate evaluated a
    /// second time keeps its reach (the demand points it covers and the similarities) in a bounded cache, so
    /// later evaluations need no exponentials. <paramref name="initialGains"/>, when given, receives each
    /// candidate's gain on the starting set (every candidate is evaluated once before the first choice).
    /// </summary>
    private static List<Assignment> Greedy(SelectionProblem problem, CoverageFunction f, bool[] chosen, double[] left, int slots, double[]? initialGains, Reach[]? reaches)
    {
        var candidates = problem.Candidates;
        var queue = new PriorityQueue<(int Candidate, int Option, int Round), double>();
        foreach (var (j, o) in FreeOptions(problem, chosen, left))
        {
            queue.Enqueue((j, o, -1), double.NegativeInfinity);
        }

        // Which candidates keep their reach is decided in order, by count, so results never depend on timing.
        var maxCached = reaches is null ? (int)Math.Min(candidates.Count, ReachCacheBytes / (8L * Math.Max(1, candidates.Count) + 64)) : 0;
        var cache = reaches is null ? new Reach?[candidates.Count] : reaches.Select(r => (Reach?)r).ToArray();
        var cachedCount = 0;
        var evaluated = new bool[candidates.Count];
        var picked = new List<Assignment>();
        var round = 0;
        var batch = new List<(int Candidate, int Option)>(EvaluationBatch);
        var gains = new double[EvaluationBatch];
        var makeReach = new bool[EvaluationBatch];
        while (picked.Count < slots && queue.TryDequeue(out var item, out _))
        {
            var option = candidates[item.Candidate].Options[item.Option];
            if (chosen[item.Candidate] || option.Cost > left[option.Pool])
            {
                continue;
            }

            if (item.Round == round)
            {
                if (Evaluate(item.Candidate) <= 0)
                {
                    break;
                }

                chosen[item.Candidate] = true;
                left[option.Pool] -= option.Cost;
                f.Add(candidates[item.Candidate].Coordinates);
                picked.Add(new Assignment(item.Candidate, item.Option));
                round++;
                continue;
            }

            // A stale key: re-evaluate it together with the next stale keys in the queue, in parallel.
            batch.Clear();
            batch.Add((item.Candidate, item.Option));
            while (batch.Count < EvaluationBatch && queue.TryPeek(out var next, out _) && next.Round != round)
            {
                queue.Dequeue();
                var nextOption = candidates[next.Candidate].Options[next.Option];
                if (!chosen[next.Candidate] && nextOption.Cost <= left[nextOption.Pool])
                {
                    batch.Add((next.Candidate, next.Option));
                }
            }

            for (var b = 0; b < batch.Count; b++)
            {
                var j = batch[b].Candidate;
                makeReach[b] = cache[j] is null && evaluated[j] && cachedCount < maxCached;
                if (makeReach[b])
                {
                    cachedCount++;
                }

                evaluated[j] = true;
            }

            Parallel.For(0, batch.Count, b =>
            {
                var j = batch[b].Candidate;
                if (makeReach[b])
                {
                    cache[j] = f.ReachOf(candidates[j].Coordinates);
                }

                gains[b] = cache[j] is { } reach ? f.Gain(reach) : f.Gain(candidates[j].Coordinates);
            });

            for (var b = 0; b < batch.Count; b++)
            {
                var (j, o) = batch[b];
                if (round == 0 && initialGains is not null)
                {
                    initialGains[j] = gains[b];
                }

                var cost = candidates[j].Options[o];
                queue.Enqueue((j, o, round), -gains[b] / Math.Max(cost.Cost / problem.Pools[cost.Pool].Capacity, 1e-300));
            }
        }

        return picked;

        double Evaluate(int j) => cache[j] is { } reach ? f.Gain(reach) : f.Gain(candidates[j].Coordinates);
    }

    private static (bool Improved, List<Assignment> Chosen) SwapSearch(SelectionProblem problem, CoverageFunction start, int mustCount, List<Assignment> chosen, Reach[]? reaches)
    {
        var candidates = problem.Candidates;
        var improved = false;
        var demand = candidates.Count;

        var passes = candidates.Count <= SwapMultiPassCandidates ? 3 : 1;
        for (var pass = 0; pass < passes; pass++)
        {
            // For each demand point: the best similarity with the chosen runs removable by a swap excluded
            // (base: must and existing runs), and the best and second best among the removable ones.
            var removable = chosen.Skip(mustCount).ToList();
            var baseline = start.Clone();
            var best = new double[demand];
            var second = new double[demand];
            var bestOwner = new int[demand];
            Array.Fill(bestOwner, -1);
            var points = candidates.Select(c => c.Coordinates).ToArray();
            var baseSimilarity = new double[demand];
            for (var i = 0; i < demand; i++)
            {
                baseSimilarity[i] = baseline.BestSimilarity(i);
            }

            for (var s = 0; s < removable.Count; s++)
            {
                var facility = candidates[removable[s].Candidate].Coordinates;
                for (var i = 0; i < demand; i++)
                {
                    var k = CoverageFunction.Similarity(points[i], facility);
                    if (k > best[i])
                    {
                        second[i] = best[i];
                        best[i] = k;
                        bestOwner[i] = s;
                    }
                    else if (k > second[i])
                    {
                        second[i] = k;
                    }
                }
            }

            var weights = baseline.Weights;
            var current = 0.0;
            for (var i = 0; i < demand; i++)
            {
                current += weights[i] * Math.Max(baseSimilarity[i], best[i]);
            }

            var used = new double[problem.Pools.Count];
            foreach (var a in chosen)
            {
                var o = candidates[a.Candidate].Options[a.Option];
                used[o.Pool] += o.Cost;
            }

            var now = start.Clone();
            foreach (var a in removable)
            {
                now.Add(candidates[a.Candidate].Coordinates);
            }

            // Try removing only the chosen runs that contribute least per unit of budget.
            var loss = new double[removable.Count];
            for (var i = 0; i < demand; i++)
            {
                if (bestOwner[i] >= 0)
                {
                    loss[bestOwner[i]] += weights[i] * (best[i] - Math.Max(baseSimilarity[i], second[i]));
                }
            }

            var tryOut = Enumerable.Range(0, removable.Count)
                .OrderBy(s => loss[s] / Math.Max(candidates[removable[s].Candidate].Options[removable[s].Option].Cost / problem.Pools[candidates[removable[s].Candidate].Options[removable[s].Option].Pool].Capacity, 1e-300))
                .Take(SwapCandidates).ToList();
            var inSet = chosen.Select(a => a.Candidate).ToHashSet();
            var outside = Enumerable.Range(0, candidates.Count).Where(j => !inSet.Contains(j))
                .Select(j => (Candidate: j, Gain: GainOf(now, candidates, reaches, j)))
                .SelectMany(x => candidates[x.Candidate].Options.Select((o, k) => (x.Candidate, Option: k, Ratio: x.Gain / Math.Max(o.Cost / problem.Pools[o.Pool].Capacity, 1e-300))))
                .OrderByDescending(x => x.Ratio).Take(SwapCandidates).ToList();
            var bestGain = 1e-9;
            (int Out, Assignment In)? bestSwap = null;
            var without = new double[demand];
            foreach (var s in tryOut)
            {
                var withoutValue = 0.0;
                for (var i = 0; i < demand; i++)
                {
                    without[i] = Math.Max(baseSimilarity[i], bestOwner[i] == s ? second[i] : best[i]);
                    withoutValue += weights[i] * without[i];
                }

                var removed = candidates[removable[s].Candidate].Options[removable[s].Option];
                foreach (var (j, o, _) in outside)
                {
                    var option = candidates[j].Options[o];
                    var after = used[option.Pool] + option.Cost - (removed.Pool == option.Pool ? removed.Cost : 0);
                    if (after > problem.Pools[option.Pool].Capacity)
                    {
                        continue;
                    }

                    var value = withoutValue;
                    if (reaches is not null)
                    {
                        var reach = reaches[j];
                        for (var r = 0; r < reach.Index.Length; r++)
                        {
                            var i = reach.Index[r];
                            var k = reach.Similarity[r];
                            if (k > without[i])
                            {
                                value += weights[i] * (k - without[i]);
                            }
                        }
                    }
                    else
                    {
                        var facility = candidates[j].Coordinates;
                        for (var i = 0; i < demand; i++)
                        {
                            var k = CoverageFunction.Similarity(points[i], facility);
                            if (k > without[i])
                            {
                                value += weights[i] * (k - without[i]);
                            }
                        }
                    }

                    if (value - current > bestGain)
                    {
                        bestGain = value - current;
                        bestSwap = (mustCount + s, new Assignment(j, o));
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
    private static double UpperBound(SelectionProblem problem, List<Assignment> set, double[] capacityAfterMusts, Reach[]? reaches)
    {
        var candidates = problem.Candidates;
        var f = new CoverageFunction(candidates.Select(c => c.Coordinates).ToList(), candidates.Select(c => c.Value).ToList(), problem.Existing);
        foreach (var a in set)
        {
            f.Add(candidates[a.Candidate].Coordinates);
        }

        var inSet = set.Select(a => a.Candidate).ToHashSet();
        var gains = new double[candidates.Count];
        Parallel.For(0, candidates.Count, j => gains[j] = inSet.Contains(j) ? 0 : GainOf(f, candidates, reaches, j));

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
