using Campaign.Core.Selection;
using Xunit.Abstractions;

namespace Campaign.Core.Tests.Selection;

/// <summary>Property tests on random small instances against brute-force enumeration (seeded).</summary>
public class SelectionPropertyTests
{
    private readonly ITestOutputHelper _output;

    public SelectionPropertyTests(ITestOutputHelper output) => _output = output;

    public static TheoryData<int> Seeds => new() { 1, 2, 3, 4, 5, 6, 7, 8 };

    private static SelectionProblem RandomProblem(int seed, int n, int pools, SelectionObjective objective, double budgetFraction = 0.35, int? maxRuns = null, int musts = 1)
    {
        var random = new Random(seed);
        var candidates = new List<SelectionCandidate>();
        for (var j = 0; j < n; j++)
        {
            var coordinates = Enumerable.Range(0, 5).Select(_ => 3 * random.NextDouble()).ToArray();
            var options = new List<SelectionOption>();
            for (var p = 0; p < pools; p++)
            {
                if (p == 0 || random.NextDouble() < 0.7)
                {
                    var cost = 10 + 90 * random.NextDouble();
                    options.Add(new SelectionOption(p, "m" + p, cost, cost, cost * 1.5));
                }
            }

            candidates.Add(new SelectionCandidate("c" + j, coordinates, 0.5 + random.NextDouble(), j < musts, options));
        }

        var existing = new List<double[]> { Enumerable.Range(0, 5).Select(_ => 3 * random.NextDouble()).ToArray() };
        var total = candidates.Sum(c => c.Options[0].Cost);
        var budgetPools = Enumerable.Range(0, pools).Select(p => new BudgetPool("m" + p, budgetFraction * total / pools)).ToList();
        return new SelectionProblem(candidates, existing, budgetPools, maxRuns, objective);
    }

    /// <summary>Every feasible assignment (each candidate left out or on one of its options), with its objective.</summary>
    private static (double Best, int Count) BruteForce(SelectionProblem problem)
    {
        var n = problem.Candidates.Count;
        var choice = new int[n];
        var best = double.NegativeInfinity;
        var count = 0;
        var start = new CoverageFunction(problem.Candidates.Select(c => c.Coordinates).ToList(), problem.Candidates.Select(c => c.Value).ToList(), problem.Existing);

        void Walk(int j, double[] used, int chosen)
        {
            if (j == n)
            {
                count++;
                var picked = Enumerable.Range(0, n).Where(k => choice[k] >= 0).ToList();
                var value = problem.Objective == SelectionObjective.Value
                    ? picked.Sum(k => problem.Candidates[k].Value)
                    : CoverageFunction.Evaluate(start, picked.Select(k => problem.Candidates[k].Coordinates));
                best = Math.Max(best, value);
                return;
            }

            var c = problem.Candidates[j];
            if (!c.Must)
            {
                choice[j] = -1;
                Walk(j + 1, used, chosen);
            }

            if (problem.MaxRuns is { } cap && chosen >= cap)
            {
                return;
            }

            for (var o = 0; o < c.Options.Count; o++)
            {
                var option = c.Options[o];
                if (used[option.Pool] + option.Cost > problem.Pools[option.Pool].Capacity)
                {
                    continue;
                }

                used[option.Pool] += option.Cost;
                choice[j] = o;
                Walk(j + 1, used, chosen + 1);
                used[option.Pool] -= option.Cost;
            }
        }

        Walk(0, new double[problem.Pools.Count], 0);
        return (best, count);
    }

    private static void AssertFeasible(SelectionProblem problem, SelectionResult result)
    {
        var used = new double[problem.Pools.Count];
        foreach (var a in result.Chosen)
        {
            var option = problem.Candidates[a.Candidate].Options[a.Option];
            used[option.Pool] += option.Cost;
        }

        for (var p = 0; p < used.Length; p++)
        {
            Assert.True(used[p] <= problem.Pools[p].Capacity * (1 + 1e-12), $"pool {p}: used {used[p]} of {problem.Pools[p].Capacity}");
        }

        Assert.Equal(result.Chosen.Count, result.Chosen.Select(a => a.Candidate).Distinct().Count());
        var chosen = result.Chosen.Select(a => a.Candidate).ToHashSet();
        Assert.All(Enumerable.Range(0, problem.Candidates.Count).Where(j => problem.Candidates[j].Must), j => Assert.Contains(j, chosen));
        if (problem.MaxRuns is { } cap)
        {
            Assert.True(result.Chosen.Count <= cap);
        }
    }

    [Theory]
    [MemberData(nameof(Seeds))]
    public void Value_objective_is_exact_on_one_budget(int seed)
    {
        var problem = RandomProblem(seed, 16, 1, SelectionObjective.Value, maxRuns: seed % 2 == 0 ? 4 : null);
        var result = Selector.Solve(problem);
        AssertFeasible(problem, result);
        var (best, _) = BruteForce(problem);
        Assert.Equal(best, result.Objective, 9);
        Assert.Equal(best, result.UpperBound, 9);
    }

    [Theory]
    [MemberData(nameof(Seeds))]
    public void Value_objective_is_exact_with_several_clusters(int seed)
    {
        var problem = RandomProblem(seed, 10, 2, SelectionObjective.Value);
        var result = Selector.Solve(problem);
        AssertFeasible(problem, result);
        var (best, _) = BruteForce(problem);
        Assert.Equal(best, result.Objective, 9);
    }

    [Theory]
    [MemberData(nameof(Seeds))]
    public void Coverage_meets_its_guarantee_and_the_bound_holds(int seed)
    {
        var problem = RandomProblem(seed, 14, 1, SelectionObjective.Coverage, maxRuns: seed % 3 == 0 ? 3 : null);
        var result = Selector.Solve(problem);
        AssertFeasible(problem, result);
        var (best, _) = BruteForce(problem);
        _output.WriteLine($"seed {seed}: objective {result.Objective:F6}, optimum {best:F6}, ratio {result.Objective / best:F4}, bound {result.UpperBound:F6}, method {result.Method}");
        Assert.True(result.Objective >= (1 - 1 / Math.E) * best - 1e-12, $"ratio {result.Objective / best}");
        Assert.True(result.UpperBound >= best - 1e-12, $"bound {result.UpperBound} below optimum {best}");
        Assert.Equal(1 - 1 / Math.E, result.Guarantee, 12);
    }

    [Theory]
    [MemberData(nameof(Seeds))]
    public void Coverage_with_several_clusters_stays_feasible_and_bounded(int seed)
    {
        var problem = RandomProblem(seed, 10, 2, SelectionObjective.Coverage);
        var result = Selector.Solve(problem);
        AssertFeasible(problem, result);
        var (best, _) = BruteForce(problem);
        Assert.True(result.UpperBound >= best - 1e-12);
        Assert.True(result.Objective <= best + 1e-12);
        Assert.True(result.Objective >= 0.5 * best, $"ratio {result.Objective / best}");
    }

    [Theory]
    [MemberData(nameof(Seeds))]
    public void More_budget_never_lowers_the_objective(int seed)
    {
        foreach (var objective in new[] { SelectionObjective.Value, SelectionObjective.Coverage })
        {
            var previous = 0.0;
            foreach (var fraction in new[] { 0.1, 0.2, 0.3, 0.45, 0.7, 1.0 })
            {
                var result = Selector.Solve(RandomProblem(seed, 12, 1, objective, fraction, musts: 0));
                Assert.True(result.Objective >= previous - 1e-12, $"{objective} at budget fraction {fraction}: {result.Objective} < {previous}");
                previous = result.Objective;
            }
        }
    }

    [Fact]
    public void Must_runs_that_do_not_fit_are_named_with_the_overrun()
    {
        var problem = RandomProblem(1, 6, 1, SelectionObjective.Coverage, budgetFraction: 0.01, musts: 2);
        var error = Assert.Throws<Campaign.Core.Domain.InvalidInputException>(() => Selector.Solve(problem));
        Assert.StartsWith("must runs do not fit the budget: c0", error.Message);
        Assert.Contains("overrun", error.Message);
    }
}
