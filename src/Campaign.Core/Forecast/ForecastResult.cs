namespace Campaign.Core.Forecast;

/// <summary>Three percentiles of a date; null when the event did not happen in that share of replicas.</summary>
public sealed record DateQuantiles(DateTimeOffset? P10, DateTimeOffset? P50, DateTimeOffset? P90);

/// <summary>The forecast of one run.</summary>
/// <param name="Id">Run id.</param>
/// <param name="Cluster">Cluster.</param>
/// <param name="Finish">Finish date percentiles.</param>
/// <param name="ProbabilityLate">Probability that it finishes after its allocation ends, or never within it.</param>
/// <param name="MeanLegs">Mean number of legs it still needs (failed ones included).</param>
public sealed record RunForecast(string Id, string Cluster, DateQuantiles Finish, double ProbabilityLate, double MeanLegs);

/// <summary>Charge in one allocation window (or the whole allocation when it has no windows).</summary>
/// <param name="Cluster">Cluster.</param>
/// <param name="Start">Window start.</param>
/// <param name="End">Window end.</param>
/// <param name="Amount">Core-hours granted in the window.</param>
/// <param name="MeanCharge">Mean core-hours charged in it (the forecast's part, plus any already charged for the whole allocation).</param>
/// <param name="P10">10th percentile of the charge.</param>
/// <param name="P90">90th percentile of the charge.</param>
/// <param name="ProbabilityOver">Probability the charge exceeds the amount.</param>
/// <param name="ProbabilityUnused">Probability that more than 10% of the amount is left unused.</param>
public sealed record WindowForecast(string Cluster, DateOnly Start, DateOnly End, double Amount, double MeanCharge, double P10, double P90, double ProbabilityOver, double ProbabilityUnused);

/// <summary>The whole forecast.</summary>
/// <param name="Start">When the simulation starts (now).</param>
/// <param name="Replicas">Replicas run.</param>
/// <param name="Finish">Finish of the whole campaign (all runs).</param>
/// <param name="ProbabilityFits">Probability that every run finishes within its cluster's allocation (charge and end date).</param>
/// <param name="Runs">Per run.</param>
/// <param name="Windows">Per allocation window.</param>
public sealed record ForecastResult(DateTimeOffset Start, int Replicas, DateQuantiles Finish, double ProbabilityFits, IReadOnlyList<RunForecast> Runs, IReadOnlyList<WindowForecast> Windows)
{
    /// <summary>The runs most likely to be late, worst first.</summary>
    public IReadOnlyList<RunForecast> MostLikelyLate(int count) => Runs.Where(r => r.ProbabilityLate > 0).OrderByDescending(r => r.ProbabilityLate).ThenBy(r => r.Id, StringComparer.Ordinal).Take(count).ToList();
}
