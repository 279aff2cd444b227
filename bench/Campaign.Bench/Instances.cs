using Campaign.Core.Selection;

namespace Campaign.Bench;

/// <summary>Seeded synthetic selection instances (invented, for timing only).</summary>
public static class Instances
{
    /// <summary>
    /// n candidates spread over q in [1, 10] and aligned and in-plane spins, costs log-normal around 2e5
    /// core-hours growing with q, one budget of <paramref name="budgetFraction"/> of the total cost.
    /// </summary>
    public static SelectionProblem Coverage(int n, double budgetFraction = 0.1, int seed = 1, SelectionObjective objective = SelectionObjective.Coverage)
    {
        var random = new Random(seed);
        var space = ParameterSpace.Default;
        var candidates = new List<SelectionCandidate>(n);
        for (var j = 0; j < n; j++)
        {
            var q = Math.Exp(Math.Log(10) * random.NextDouble());
            var coordinates = new[]
            {
                Math.Log(q) / space.LnQScale,
                (1.8 * random.NextDouble() - 0.9) / space.Chi1zScale,
                (1.8 * random.NextDouble() - 0.9) / space.Chi2zScale,
                (random.NextDouble() < 0.3 ? 0.7 * random.NextDouble() : 0) / space.Chi1InPlaneScale,
                (random.NextDouble() < 0.3 ? 0.7 * random.NextDouble() : 0) / space.Chi2InPlaneScale,
            };
            var cost = 2e5 * Math.Pow(q, 0.8) * Math.Exp(0.3 * (random.NextDouble() - 0.5));
            candidates.Add(new SelectionCandidate("c" + j, coordinates, 0.5 + random.NextDouble(), false, new[] { new SelectionOption(0, "m", cost, cost, cost * 1.4) }));
        }

        var total = candidates.Sum(c => c.Options[0].Cost);
        return new SelectionProblem(candidates, Array.Empty<double[]>(), new[] { new BudgetPool("m", budgetFraction * total) }, null, objective);
    }
}
