using Campaign.Core.Selection;

namespace Campaign.Core.Tests.Selection;

public class KnapsackTests
{
    // Source: J. Burkardt, KNAPSACK_01 test data sets (Florida State University), collecting classic textbook
    // instances P01, P03, P06, P07 with their published optima (items 1-based there, 0-based here).
    public static TheoryData<string, double, double[], double[], double, int[]> Instances => new()
    {
        { "P01", 165, new double[] { 23, 31, 29, 44, 53, 38, 63, 85, 89, 82 }, new double[] { 92, 57, 49, 68, 60, 43, 67, 84, 87, 72 }, 309, new[] { 0, 1, 2, 3, 5 } },
        { "P03", 190, new double[] { 56, 59, 80, 64, 75, 17 }, new double[] { 50, 50, 64, 46, 50, 5 }, 150, new[] { 0, 1, 4 } },
        { "P06", 170, new double[] { 41, 50, 49, 59, 55, 57, 60 }, new double[] { 442, 525, 511, 593, 546, 564, 617 }, 1735, new[] { 1, 3, 6 } },
        {
            "P07", 750, new double[] { 70, 73, 77, 80, 82, 87, 90, 94, 98, 106, 110, 113, 115, 118, 120 },
            new double[] { 135, 139, 149, 150, 156, 163, 173, 184, 192, 201, 210, 214, 221, 229, 240 }, 1458, new[] { 0, 2, 4, 6, 7, 8, 13, 14 }
        },
    };

    [Theory]
    [MemberData(nameof(Instances))]
    public void Dynamic_programming_reaches_the_published_optimum(string name, double capacity, double[] weights, double[] profits, double optimum, int[] items)
    {
        var solution = Knapsack.Solve(profits, weights, capacity);
        Assert.Equal(optimum, solution.Value);
        Assert.Equal(items, solution.Items);
        Assert.StartsWith("exact: dynamic programming", solution.Method);
        Assert.True(items.Sum(i => weights[i]) <= capacity, name);
    }

    [Theory]
    [MemberData(nameof(Instances))]
    public void Branch_and_bound_reaches_the_published_optimum_on_non_integer_costs(string name, double capacity, double[] weights, double[] profits, double optimum, int[] items)
    {
        // Scaling every weight and the capacity by pi keeps the optimum but defeats the integer DP (the capacity
        // gets a relative 1e-12 of slack so that rounding cannot push an exact fit over it).
        var scaled = weights.Select(w => w * Math.PI).ToArray();
        var solution = Knapsack.Solve(profits, scaled, capacity * Math.PI * (1 + 1e-12));
        Assert.Equal(optimum, solution.Value);
        Assert.Equal(items, solution.Items);
        Assert.Equal("exact: branch and bound with the Dantzig bound", solution.Method);
        Assert.Equal(optimum, solution.UpperBound);
        _ = name;
    }

    [Theory]
    [InlineData("P03", 146)]
    [InlineData("P06", 1478)]
    [InlineData("P07", 1441)]
    public void Profit_ratio_greedy_alone_falls_short_on_the_instances_that_separate_it(string name, double greedyValue)
    {
        // Reference sheet: greedy by profit ratio reaches 146 on P03, 1478 on P06 and 1441 on P07.
        var (capacity, weights, profits) = Instances.Select(r => ((string)r[0], (double)r[1], (double[])r[2], (double[])r[3])).Single(r => r.Item1 == name) switch
        {
            var r => (r.Item2, r.Item3, r.Item4),
        };
        var left = capacity;
        var value = 0.0;
        foreach (var i in Enumerable.Range(0, weights.Length).OrderByDescending(i => profits[i] / weights[i]))
        {
            if (weights[i] <= left)
            {
                left -= weights[i];
                value += profits[i];
            }
        }

        Assert.Equal(greedyValue, value);
        Assert.True(Knapsack.Solve(profits, weights, capacity).Value > value);
    }

    [Fact]
    public void A_cap_on_the_number_of_items_is_respected()
    {
        // P07 with at most 5 items: brute force over all subsets gives the optimum.
        var (_, capacity, weights, profits, _, _) = ((string, double, double[], double[], double, int[]))(Instances.Select(r => ((string)r[0], (double)r[1], (double[])r[2], (double[])r[3], (double)r[4], (int[])r[5])).Last());
        var best = 0.0;
        for (var mask = 0; mask < 1 << weights.Length; mask++)
        {
            if (System.Numerics.BitOperations.PopCount((uint)mask) > 5)
            {
                continue;
            }

            var w = 0.0;
            var v = 0.0;
            for (var i = 0; i < weights.Length; i++)
            {
                if ((mask >> i & 1) == 1)
                {
                    w += weights[i];
                    v += profits[i];
                }
            }

            if (w <= capacity && v > best)
            {
                best = v;
            }
        }

        var solution = Knapsack.Solve(profits, weights, capacity, maxItems: 5);
        Assert.Equal(best, solution.Value);
        Assert.True(solution.Items.Count <= 5);
    }
}
