namespace Campaign.Core.CostModel;

/// <summary>Cross-validation result of one candidate feature set.</summary>
/// <param name="Name">Feature-set name.</param>
/// <param name="Parameters">Number of coefficients.</param>
/// <param name="CvMse">Mean over folds of the held-out mean squared error of ln(core-hours).</param>
/// <param name="CvMseStandardError">Standard error of <paramref name="CvMse"/> across folds.</param>
/// <param name="CvMedianAbsPctError">Median over held-out runs of |predicted median / actual - 1|, in per cent.</param>
/// <param name="CvIntervalCoverage">Fraction of held-out runs inside their prediction interval.</param>
public sealed record FeatureSetScore(string Name, int Parameters, double CvMse, double CvMseStandardError, double CvMedianAbsPctError, double CvIntervalCoverage);

/// <summary>A run that pulls the fit: its id and Cook's distance.</summary>
public sealed record InfluentialRun(string RunId, double CooksDistance);

/// <summary>A run the robust fit down-weighted (it limped: much slower or faster than its peers).</summary>
public sealed record DownWeightedRun(string RunId, double Weight, double ResidualPct);

/// <summary>
/// A fitted cost model, as stored in the workspace: ln(core-hours x relative speed) = x'b + e, e ~ N(0, s^2).
/// Everything needed to predict is here (coefficients, (X'WX + P)^-1, s, degrees of freedom, training ranges),
/// plus the diagnostics that justify it.
/// </summary>
public sealed record FittedCostModel
{
    /// <summary>Chosen feature set.</summary>
    public required string FeatureSet { get; init; }

    /// <summary>Its terms, in coefficient order.</summary>
    public required string[] Terms { get; init; }

    /// <summary>Coefficients b.</summary>
    public required double[] Coefficients { get; init; }

    /// <summary>Standard errors of b.</summary>
    public required double[] StandardErrors { get; init; }

    /// <summary>(X'WX + P)^-1; the coefficient covariance is this times s^2.</summary>
    public required double[][] UnscaledCovariance { get; init; }

    /// <summary>Residual standard deviation s of ln(core-hours).</summary>
    public required double ResidualSd { get; init; }

    /// <summary>Residual degrees of freedom (n - trace H).</summary>
    public required double DegreesOfFreedom { get; init; }

    /// <summary>R^2 of the final fit.</summary>
    public required double RSquared { get; init; }

    /// <summary>Duan's smearing factor mean(exp(residual)) (weighted by the robust weights in a robust fit), turning the median into a mean.</summary>
    public required double Smearing { get; init; }

    /// <summary>Runs used in the fit.</summary>
    public required int RunCount { get; init; }

    /// <summary>Runs in the logs that were not used (failed, or partial without t_end).</summary>
    public required int RunsSkipped { get; init; }

    /// <summary>True when the Huber robust fit was used.</summary>
    public required bool Robust { get; init; }

    /// <summary>True when the logs were too few and the prior exponents were blended in.</summary>
    public required bool UsedPrior { get; init; }

    /// <summary>Smallest value of each term in the training data.</summary>
    public required double[] TermMin { get; init; }

    /// <summary>Largest value of each term in the training data.</summary>
    public required double[] TermMax { get; init; }

    /// <summary>
    /// An extrapolation in the user's terms, not the model's transformed features: "chi_max 0.74 beyond the logs'
    /// 0.62", "length 6,777 M beyond the logs' 6,100 M", "q 9 beyond the logs' 8", "level 0 below the logs' 1".
    /// </summary>
    internal static string Beyond(string term, double value, double edge, bool above)
    {
        static string G(double v, string format) => v.ToString(format, System.Globalization.CultureInfo.InvariantCulture);
        var (name, shown, bound) = term switch
        {
            "ln_length" => ("length", G(Math.Exp(value), "N0") + " M", G(Math.Exp(edge), "N0") + " M"),
            "ln_q" => ("q", G(Math.Exp(value), "0.##"), G(Math.Exp(edge), "0.##")),
            "spin" => ("chi_max", G(1 - Math.Exp(-value), "0.00"), G(1 - Math.Exp(-edge), "0.00")),
            "ln_cores" => ("cores", G(Math.Exp(value), "N0"), G(Math.Exp(edge), "N0")),
            "level" => ("level", G(value, "0"), G(edge, "0")),
            _ => (term, G(value, "G4"), G(edge, "G4")),
        };
        return $"{name} {shown} {(above ? "beyond" : "below")} the logs' {bound}";
    }

    /// <summary>Largest leverage of a training run.</summary>
    public required double MaxLeverage { get; init; }

    /// <summary>Central probability of the intervals scored in cross-validation.</summary>
    public required double CvIntervalLevel { get; init; }

    /// <summary>Number of folds.</summary>
    public required int Folds { get; init; }

    /// <summary>Every candidate feature set's score.</summary>
    public required FeatureSetScore[] Candidates { get; init; }

    /// <summary>Runs with Cook's distance above 4/n, largest first.</summary>
    public required InfluentialRun[] Influential { get; init; }

    /// <summary>Runs with robust weight below 1 (empty unless robust).</summary>
    public required DownWeightedRun[] DownWeighted { get; init; }

    /// <summary>Clusters seen in training with their run counts.</summary>
    public required Dictionary<string, int> Clusters { get; init; }

    /// <summary>CV median absolute percentage error of the chosen set.</summary>
    public double CvMedianAbsPctError => Candidates.Single(c => c.Name == FeatureSet).CvMedianAbsPctError;

    /// <summary>CV interval coverage of the chosen set.</summary>
    public double CvIntervalCoverage => Candidates.Single(c => c.Name == FeatureSet).CvIntervalCoverage;

    /// <summary>The feature set.</summary>
    public FeatureSet Features => new(FeatureSet, Terms);

    /// <summary>Prediction for one run at central probability <paramref name="level"/>.</summary>
    public CostPrediction Predict(CostObservation o, double level)
    {
        var x = Features.Row(o);
        var center = 0.0;
        for (var j = 0; j < x.Length; j++)
        {
            center += x[j] * Coefficients[j];
        }

        var leverage = Leverage(x);
        var se = ResidualSd * Math.Sqrt(1 + leverage);
        var t = Quantiles.GetOrAdd((level, DegreesOfFreedom), k => PredictionInterval.StudentTQuantile((1 + k.Level) / 2, k.Dof));
        var logMedian = center - o.LogSpeed;
        var reasons = new List<string>();
        for (var j = 0; j < x.Length; j++)
        {
            if (Terms[j] == "intercept" || Terms[j].StartsWith(CostModel.FeatureSet.ClusterPrefix, StringComparison.Ordinal))
            {
                continue;
            }

            if (x[j] < TermMin[j] - 1e-9 || x[j] > TermMax[j] + 1e-9)
            {
                reasons.Add(Beyond(Terms[j], x[j], x[j] > TermMax[j] ? TermMax[j] : TermMin[j], x[j] > TermMax[j]));
            }
        }

        if (leverage > MaxLeverage * (1 + 1e-9))
        {
            reasons.Add($"a combination of parameters unlike any logged run (leverage {leverage.ToString("G2", System.Globalization.CultureInfo.InvariantCulture)}, the logs' largest {MaxLeverage.ToString("G2", System.Globalization.CultureInfo.InvariantCulture)})");
        }

        if (!Clusters.ContainsKey(o.Cluster))
        {
            reasons.Add($"no logged runs on cluster {o.Cluster} (its profile speed is used)");
        }

        return new CostPrediction(logMedian, se, Math.Exp(logMedian), Math.Exp(logMedian) * Smearing, Math.Exp(logMedian - t * se), Math.Exp(logMedian + t * se), leverage, reasons);
    }

    /// <summary>Student t quantiles already computed, by interval level (the inverse CDF is slow; estimates repeat it per row).</summary>
    private static readonly System.Collections.Concurrent.ConcurrentDictionary<(double Level, double Dof), double> Quantiles = new();

    /// <summary>x'(X'WX + P)^-1 x.</summary>
    public double Leverage(IReadOnlyList<double> x)
    {
        var sum = 0.0;
        for (var i = 0; i < x.Count; i++)
        {
            for (var j = 0; j < x.Count; j++)
            {
                sum += x[i] * UnscaledCovariance[i][j] * x[j];
            }
        }

        return sum;
    }
}

/// <summary>A predicted cost in core-hours on the run's cluster.</summary>
/// <param name="LogMedian">ln of the median.</param>
/// <param name="LogStandardError">Standard error of a new ln(core-hours): s sqrt(1 + h0).</param>
/// <param name="Median">exp(yhat).</param>
/// <param name="Mean">Median x smearing factor.</param>
/// <param name="Low">Lower end of the central prediction interval.</param>
/// <param name="High">Upper end of the central prediction interval.</param>
/// <param name="Leverage">h0.</param>
/// <param name="Extrapolation">Why the prediction is an extrapolation (empty when it is not).</param>
public sealed record CostPrediction(double LogMedian, double LogStandardError, double Median, double Mean, double Low, double High, double Leverage, IReadOnlyList<string> Extrapolation);
