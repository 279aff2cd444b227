using Campaign.Core.Forecast;

namespace Campaign.Reports;

/// <summary>An allocation as the burn-down shows it, with the ends of its use-it-or-lose-it windows.</summary>
public sealed record AllocationLine(string Cluster, DateTimeOffset Start, DateTimeOffset End, double CoreHours, double PlannedCoreHours, IReadOnlyList<DateTimeOffset>? WindowEnds = null);

/// <summary>A charge that happened (one ended leg).</summary>
public sealed record ChargePoint(string Cluster, DateTimeOffset At, double CoreHours);

/// <summary>A run's simulated time against wall-clock, and the charged core-hours it still needs (what ranks it).</summary>
public sealed record ProgressLine(string RunId, double Target, IReadOnlyList<(DateTimeOffset At, double T)> Points, double RemainingCost = 0);

/// <summary>A configuration on the coverage map: mass ratio, effective spin, in-plane spin (the larger of the two holes').</summary>
public sealed record CoveragePoint(double Q, double ChiEff, double ChiPerp = 0)
{
    /// <summary>True when a spin has an in-plane component (the orbit precesses).</summary>
    public bool Precessing => ChiPerp > 0;
}

/// <summary>A logged run as the cost-model check shows it: predicted median and interval against actual.</summary>
/// <param name="Predicted">Predicted median core-hours.</param>
/// <param name="Low">Lower end of the 90% interval.</param>
/// <param name="High">Upper end of the 90% interval.</param>
/// <param name="Actual">Consumed core-hours.</param>
/// <param name="FromCampaign">True for runs this campaign finished (they may be scaled-down rehearsals).</param>
public sealed record ModelCheckPoint(double Predicted, double Low, double High, double Actual, bool FromCampaign = false);

/// <summary>One row of the proposal table.</summary>
public sealed record ProposalRow(string Id, int Level, string Cluster, double Median, double Low, double High, double Charged, int Legs);

/// <summary>Everything the report shows; gathered by the caller from the workspace.</summary>
public sealed record ReportData(
    string Campaign,
    DateTimeOffset GeneratedAt,
    IReadOnlyList<AllocationLine> Allocations,
    IReadOnlyList<ChargePoint> Charges,
    ForecastResult? Forecast,
    IReadOnlyList<ProgressLine> Progress,
    IReadOnlyList<CoveragePoint> Candidates,
    IReadOnlyList<CoveragePoint> Chosen,
    IReadOnlyList<CoveragePoint> Finished,
    IReadOnlyList<CoveragePoint> Existing,
    IReadOnlyList<ModelCheckPoint> ModelCheck,
    IReadOnlyList<ProposalRow> Proposal);
