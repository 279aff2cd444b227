namespace Campaign.Core.Selection;

/// <summary>
/// Exact 0/1 knapsack for the value objective with one budget: dynamic programming over integer costs when a
/// power-of-ten scale makes every cost and the capacity whole numbers and the table stays small; otherwise
/// depth-first branch and bound with the Dantzig (fractional, LP relaxation) bound, items in order of value
/// per cost (G. B. Dantzig, Oper. Res. 5, 266 (1957); S. Martello and P. Toth, Knapsack Problems, Wiley 1990).
/// A node limit keeps the search bounded; when it is hit the answer says so and carries the proven bound.
/// </summary>
public static class Knapsack
{
    /// <summary>Largest DP table (items x capacity cells) used.</summary>
    public const long MaxDpCells = 200_000_000;

    /// <summary>Branch-and-bound nodes explored before stopping with the best found.</summary>
    public const long NodeLimit = 20_000_000;

    /// <summary>Result of a knapsack solve.</summary>
    public sealed record Solution(IReadOnlyList<int> Items, double Value, double UpperBound, string Method);

    /// <summary>
    /// Maximises sum of values of a subset of <paramref name="costs"/> within <paramref name="capacity"/>,
    /// with at most <paramref name="maxItems"/> items when given.
    /// </summary>
    public static Solution Solve(IReadOnlyList<double> values, IReadOnlyList<double> costs, double capacity, int? maxItems = null)
    {
        var n = values.Count;
        if (maxItems is null && TryScale(costs, capacity, out var scale) && (long)n * (long)(capacity * scale + 1) <= MaxDpCells)
        {
            return DynamicProgramming(values, costs.Select(c => (long)Math.Round(c * scale)).ToArray(), (long)Math.Round(capacity * scale), scale);
        }

        return BranchAndBound(values, costs, capacity, maxItems);
    }

    /// <summary>The Dantzig bound: the LP relaxation's optimum for items sorted by decreasing value/cost.</summary>
    public static double DantzigBound(IReadOnlyList<double> values, IReadOnlyList<double> costs, double capacity)
    {
        var order = Enumerable.Range(0, values.Count).Where(i => values[i] > 0).OrderByDescending(i => Ratio(values[i], costs[i])).ToArray();
        var left = capacity;
        var bound = 0.0;
        foreach (var i in order)
        {
            if (costs[i] <= left)
            {
                bound += values[i];
                left -= costs[i];
            }
            else
            {
                bound += values[i] * left / costs[i];
                break;
            }
        }

        return bound;
    }

    private static double Ratio(double value, double cost) => cost <= 0 ? double.PositiveInfinity : value / cost;

    private static bool TryScale(IReadOnlyList<double> costs, double capacity, out double scale)
    {
        for (var digits = 0; digits <= 3; digits++)
        {
            scale = Math.Pow(10, digits);
            var s = scale;
            if (costs.All(c => IsWhole(c * s)) && capacity * scale < 1e9)
            {
                return true;
            }
        }

        scale = 0;
        return false;
    }

    private static bool IsWhole(double x) => Math.Abs(x - Math.Round(x)) <= 1e-9 * Math.Max(1, Math.Abs(x));

    private static Solution DynamicProgramming(IReadOnlyList<double> values, long[] costs, long capacity, double scale)
    {
        var n = values.Count;
        var width = capacity + 1;
        var best = new double[width];
        var take = new System.Collections.BitArray(checked((int)(n * width)));
        for (var i = 0; i < n; i++)
        {
            var c = costs[i];
            if (c > capacity || values[i] <= 0)
            {
                continue;
            }

            for (var w = capacity; w >= c; w--)
            {
                var candidate = best[w - c] + values[i];
                if (candidate > best[w])
                {
                    best[w] = candidate;
                    take[(int)(i * width + w)] = true;
                }
            }
        }

        var items = new List<int>();
        var at = capacity;
        for (var i = n - 1; i >= 0; i--)
        {
            if (take[(int)(i * width + at)])
            {
                items.Add(i);
                at -= costs[i];
            }
        }

        items.Reverse();
        var value = best[capacity];
        return new Solution(items, value, value, scale == 1 ? "exact: dynamic programming on integer costs" : $"exact: dynamic programming on costs scaled by {scale:0}");
    }

    private static Solution BranchAndBound(IReadOnlyList<double> values, IReadOnlyList<double> costs, double capacity, int? maxItems)
    {
        var order = Enumerable.Range(0, values.Count).Where(i => values[i] > 0 && costs[i] <= capacity).OrderByDescending(i => Ratio(values[i], costs[i])).ToArray();
        var v = order.Select(i => values[i]).ToArray();
        var c = order.Select(i => costs[i]).ToArray();
        var n = order.Length;
        var limit = maxItems ?? int.MaxValue;
        var chosen = new bool[n];
        var bestChosen = new bool[n];
        var bestValue = 0.0;
        long nodes = 0;
        var stopped = false;
        var rootBound = Bound(0, capacity, 0);

        // With a cap on the number of items the Dantzig bound alone is not valid (high-value items of low
        // ratio may be better); the sum of the largest remaining values within the cap is, and so is the minimum.
        double Bound(int from, double left, int count)
        {
            var bound = 0.0;
            for (var i = from; i < n; i++)
            {
                if (c[i] <= left)
                {
                    bound += v[i];
                    left -= c[i];
                }
                else
                {
                    bound += v[i] * left / c[i];
                    break;
                }
            }

            if (limit == int.MaxValue)
            {
                return bound;
            }

            var slots = limit - count;
            var largest = v.Skip(from).OrderByDescending(x => x).Take(slots).Sum();
            return Math.Min(bound, largest);
        }

        void Search(int i, double left, double value, int count)
        {
            if (stopped)
            {
                return;
            }

            if (++nodes > NodeLimit)
            {
                stopped = true;
                return;
            }

            if (value > bestValue)
            {
                bestValue = value;
                Array.Copy(chosen, bestChosen, n);
            }

            if (i == n || count == limit || value + Bound(i, left, count) <= bestValue * (1 + 1e-12))
            {
                return;
            }

            if (c[i] <= left)
            {
                chosen[i] = true;
                Search(i + 1, left - c[i], value + v[i], count + 1);
                chosen[i] = false;
            }

            Search(i + 1, left, value, count);
        }

        DeepStack.Run(() => Search(0, capacity, 0, 0));
        var items = Enumerable.Range(0, n).Where(k => bestChosen[k]).Select(k => order[k]).Order().ToList();
        return stopped
            ? new Solution(items, bestValue, Math.Max(bestValue, rootBound), $"branch and bound stopped after {NodeLimit} nodes: best found, Dantzig bound reported")
            : new Solution(items, bestValue, bestValue, "exact: branch and bound with the Dantzig bound");
    }
}
