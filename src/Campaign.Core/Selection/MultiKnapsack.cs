namespace Campaign.Core.Selection;

/// <summary>
/// The value objective with several budget pools: each candidate is left out or assigned to one of its
/// options (a cluster), within every pool's capacity. Depth-first branch and bound; the bound at a node is the
/// value so far plus, for every pool, the Dantzig bound of the undecided candidates' options in that pool
/// (a candidate may count in several pools, which only loosens the bound). Must runs come first and are
/// never left out. Bounded by a node limit.
/// </summary>
internal static class MultiKnapsack
{
    public sealed record Result(IReadOnlyList<Assignment> Chosen, double Value, double UpperBound, string Method);

    public static Result Solve(SelectionProblem problem, int[] free, double[] capacity, int? slots)
    {
        var candidates = problem.Candidates;
        var pools = problem.Pools.Count;
        var order = free.Where(j => candidates[j].Must)
            .Concat(free.Where(j => !candidates[j].Must && candidates[j].Value > 0)
                .OrderByDescending(j => candidates[j].Options.Max(o => candidates[j].Value / Math.Max(o.Cost / problem.Pools[o.Pool].Capacity, 1e-300))))
            .ToArray();
        var forced = order.Count(j => candidates[j].Must);
        var n = order.Length;
        var limit = slots ?? int.MaxValue;
        var left = (double[])capacity.Clone();
        var current = new int[n];
        Array.Fill(current, -1);
        var best = (int[])current.Clone();
        var bestValue = 0.0;
        long nodes = 0;
        var stopped = false;

        double Bound(int from)
        {
            var total = 0.0;
            for (var p = 0; p < pools; p++)
            {
                var values = new List<double>();
                var costs = new List<double>();
                for (var i = from; i < n; i++)
                {
                    var c = candidates[order[i]];
                    var cheapest = double.PositiveInfinity;
                    foreach (var o in c.Options)
                    {
                        if (o.Pool == p && o.Cost < cheapest)
                        {
                            cheapest = o.Cost;
                        }
                    }

                    if (!double.IsPositiveInfinity(cheapest))
                    {
                        values.Add(c.Value);
                        costs.Add(cheapest);
                    }
                }

                total += Knapsack.DantzigBound(values, costs, left[p]);
            }

            return total;
        }

        var rootBound = Bound(0);

        void Search(int i, double value, int count)
        {
            if (stopped)
            {
                return;
            }

            if (++nodes > Knapsack.NodeLimit)
            {
                stopped = true;
                return;
            }

            if (i >= forced && value > bestValue)
            {
                bestValue = value;
                Array.Copy(current, best, n);
            }

            if (i == n || (i >= forced && (count == limit || value + Bound(i) <= bestValue * (1 + 1e-12))))
            {
                return;
            }

            var c = candidates[order[i]];
            foreach (var o in Enumerable.Range(0, c.Options.Count).OrderBy(o => c.Options[o].Cost / problem.Pools[c.Options[o].Pool].Capacity))
            {
                var option = c.Options[o];
                if (option.Cost > left[option.Pool])
                {
                    continue;
                }

                left[option.Pool] -= option.Cost;
                current[i] = o;
                Search(i + 1, value + c.Value, count + 1);
                current[i] = -1;
                left[option.Pool] += option.Cost;
            }

            if (!c.Must)
            {
                Search(i + 1, value, count);
            }
        }

        DeepStack.Run(() => Search(0, 0, 0));
        if (forced > 0 && best.Take(forced).Any(o => o < 0))
        {
            throw new Domain.InvalidInputException(new[] { "must runs do not fit the clusters' budgets together in any assignment: expected must runs that fit" });
        }

        var chosen = Enumerable.Range(0, n).Where(i => best[i] >= 0).Select(i => new Assignment(order[i], best[i])).ToList();
        return stopped
            ? new Result(chosen, bestValue, Math.Max(bestValue, rootBound), $"branch and bound over cluster assignments stopped after {Knapsack.NodeLimit} nodes: best found, bound reported")
            : new Result(chosen, bestValue, bestValue, "exact: branch and bound over cluster assignments");
    }
}
