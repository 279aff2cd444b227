namespace Campaign.Core.CostModel;

/// <summary>One simulation of a proposal (a configuration at one level, or its eccentricity trials).</summary>
/// <param name="Id">Configuration id.</param>
/// <param name="Level">Resolution level.</param>
/// <param name="Kind">"run", or "ecc" for the eccentricity-reduction trials of the configuration.</param>
/// <param name="Cluster">Cluster.</param>
/// <param name="Cores">Cores per job.</param>
/// <param name="LengthM">Simulated length (M) of the run (of all trials together for "ecc").</param>
/// <param name="Median">Median core-hours consumed.</param>
/// <param name="Mean">Mean core-hours consumed.</param>
/// <param name="Low">Lower end of the interval.</param>
/// <param name="High">Upper end of the interval.</param>
/// <param name="WallHours">Wall-clock hours at its cores (median).</param>
/// <param name="Legs">Chained jobs needed under the wall-time limit less the checkpoint margin (median).</param>
/// <param name="NodeHours">Wall hours x nodes (median).</param>
/// <param name="ChargedCoreHours">Core-hours the site charges under its policy (median).</param>
/// <param name="ChargedHigh">Charged core-hours at the upper end of the interval.</param>
/// <param name="CheckpointGb">Size of one checkpoint.</param>
/// <param name="OutputGb">Output kept.</param>
/// <param name="Source">"model", or "given" when the candidate file gave core_hours.</param>
/// <param name="Extrapolation">Why this is an extrapolation of the logs (empty if it is not).</param>
/// <param name="LogStandardError">Standard error of ln(core-hours) of one run (0 for given costs).</param>
/// <param name="DegreesOfFreedom">Degrees of freedom of the t quantiles (infinite for given costs).</param>
/// <param name="Runs">How many runs the row stands for (the eccentricity trials of a configuration are one row).</param>
public sealed record EstimateRow(
    string Id,
    int Level,
    string Kind,
    string Cluster,
    int Cores,
    double LengthM,
    double Median,
    double Mean,
    double Low,
    double High,
    double WallHours,
    int Legs,
    double NodeHours,
    double ChargedCoreHours,
    double ChargedHigh,
    double CheckpointGb,
    double OutputGb,
    string Source,
    IReadOnlyList<string> Extrapolation,
    double LogStandardError,
    double DegreesOfFreedom,
    int Runs)
{
    /// <summary>
    /// Charged core-hours at cost quantile <paramref name="p"/>: Runs x exp(ln(median/Runs) + t_p se) x the
    /// cluster's charge ratio (charged per consumed core-hour).
    /// </summary>
    public double ChargedAt(double p)
    {
        if (LogStandardError == 0 || p == 0.5)
        {
            return ChargedCoreHours;
        }

        var t = CostModel.PredictionInterval.StudentTQuantile(p, DegreesOfFreedom);
        return ChargedCoreHours * Math.Exp(t * LogStandardError);
    }
}

/// <summary>A total with its interval from the Monte Carlo over parameters and residuals.</summary>
public sealed record EstimateTotal(double Median, double Mean, double Low, double High, double ChargedMedian, double ChargedLow, double ChargedHigh);

/// <summary>Estimates for every simulation of a proposal, with totals overall and per cluster.</summary>
public sealed record ProposalEstimate(IReadOnlyList<EstimateRow> Runs, EstimateTotal Total, IReadOnlyDictionary<string, EstimateTotal> ByCluster, double Interval, int Samples, int Seed);
