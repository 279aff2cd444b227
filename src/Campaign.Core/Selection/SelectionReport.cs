using System.Globalization;

namespace Campaign.Core.Selection;

/// <summary>A chosen configuration with where it runs, what it costs and what it adds.</summary>
/// <param name="Id">Candidate id.</param>
/// <param name="Cluster">Cluster it is assigned to.</param>
/// <param name="Cost">Charged core-hours at the chosen quantile.</param>
/// <param name="Median">Charged core-hours at the median.</param>
/// <param name="High">Charged core-hours at the upper end of the 90% interval.</param>
/// <param name="Value">Its value weight.</param>
/// <param name="Gain">What it added to the objective, in the order chosen.</param>
/// <param name="Must">True when it had to be taken.</param>
public sealed record ChosenRun(string Id, string Cluster, double Cost, double Median, double High, double Value, double Gain, bool Must);

/// <summary>A candidate left out, and why.</summary>
/// <param name="Id">Candidate id.</param>
/// <param name="Cluster">Its cheapest cluster.</param>
/// <param name="Cost">Its cost there at the chosen quantile.</param>
/// <param name="Gain">What it would add to the chosen set.</param>
/// <param name="CostPerGain">Cost per unit of gain (infinite when it adds nothing).</param>
/// <param name="Reason">Why it is not in the set.</param>
public sealed record LeftOutRun(string Id, string Cluster, double Cost, double Gain, double CostPerGain, string Reason);

/// <summary>Budget use of one pool.</summary>
public sealed record PoolUse(string Name, double Capacity, double Used, double UsedMedian, double UsedHigh)
{
    /// <summary>Capacity not used (at the chosen quantile).</summary>
    public double Left => Capacity - Used;
}

/// <summary>What the selection commands print: the chosen set, budgets, and the best left out.</summary>
public sealed record SelectionReport(IReadOnlyList<ChosenRun> Chosen, IReadOnlyList<PoolUse> Pools, IReadOnlyList<LeftOutRun> LeftOut)
{
    /// <summary>Builds the report of <paramref name="result"/>, listing up to <paramref name="leftOut"/> candidates left out, the most worthwhile first.</summary>
    public static SelectionReport Of(SelectionProblem problem, SelectionResult result, int leftOut = 10)
    {
        var candidates = problem.Candidates;
        var coverage = new CoverageFunction(candidates.Select(c => c.Coordinates).ToList(), candidates.Select(c => c.Value).ToList(), problem.Existing);
        var chosen = new List<ChosenRun>();
        var used = new double[problem.Pools.Count];
        var usedMedian = new double[problem.Pools.Count];
        var usedHigh = new double[problem.Pools.Count];
        foreach (var a in result.Chosen)
        {
            var c = candidates[a.Candidate];
            var o = c.Options[a.Option];
            double gain;
            if (problem.Objective == SelectionObjective.Coverage)
            {
                gain = coverage.Gain(c.Coordinates);
                coverage.Add(c.Coordinates);
            }
            else
            {
                gain = c.Value;
            }

            chosen.Add(new ChosenRun(c.Id, o.Cluster, o.Cost, o.Median, o.High, c.Value, gain, c.Must));
            used[o.Pool] += o.Cost;
            usedMedian[o.Pool] += o.Median;
            usedHigh[o.Pool] += o.High;
        }

        var inSet = result.Chosen.Select(a => a.Candidate).ToHashSet();
        var atCap = problem.MaxRuns is { } cap && result.Chosen.Count >= cap;
        var left = new List<LeftOutRun>();
        for (var j = 0; j < candidates.Count; j++)
        {
            if (inSet.Contains(j))
            {
                continue;
            }

            var c = candidates[j];
            var gain = problem.Objective == SelectionObjective.Coverage ? coverage.Gain(c.Coordinates) : c.Value;
            var option = c.Options.OrderBy(o => o.Cost / problem.Pools[o.Pool].Capacity).First();
            var fits = c.Options.Where(o => o.Cost <= problem.Pools[o.Pool].Capacity - used[o.Pool]).ToList();
            string reason;
            if (gain <= 1e-12)
            {
                reason = problem.Objective == SelectionObjective.Coverage ? "adds nothing: the chosen and existing runs already cover it" : "has no value";
            }
            else if (atCap)
            {
                reason = $"the cap of {problem.MaxRuns} runs is reached";
            }
            else if (fits.Count == 0)
            {
                var pool = problem.Pools[option.Pool];
                reason = $"does not fit: needs {Show(option.Cost)} on {pool.Name}, {Show(Math.Max(0, pool.Capacity - used[option.Pool]))} left";
            }
            else
            {
                option = fits.OrderBy(o => o.Cost).First();
                reason = "fits, but swapping it in lowers the objective";
            }

            left.Add(new LeftOutRun(c.Id, option.Cluster, option.Cost, gain, gain > 0 ? option.Cost / gain : double.PositiveInfinity, reason));
        }

        var pools = problem.Pools.Select((p, i) => new PoolUse(p.Name, p.Capacity, used[i], usedMedian[i], usedHigh[i])).ToList();
        return new SelectionReport(chosen, pools, left.OrderBy(l => l.CostPerGain).ThenBy(l => l.Id, StringComparer.Ordinal).Take(leftOut).ToList());
    }

    private static string Show(double value) => Math.Round(value).ToString("N0", CultureInfo.InvariantCulture);
}
