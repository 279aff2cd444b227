using MathNet.Numerics.LinearAlgebra;
using MathNet.Numerics.Statistics;

namespace Campaign.Core.CostModel;

/// <summary>
/// Fits the cost model: for each candidate feature set, k-fold cross-validation of ln(core-hours); choice of the
/// simplest set whose CV error is within one standard error of the best (the one-standard-error rule); final fit
/// of that set on every run, optionally robust (Huber IRLS), with a prior toward physical exponents when the
/// runs are few. See docs/cost-model.md.
/// </summary>
public static class CostModelFitter
{
    /// <summary>Huber's tuning constant (95% efficiency under normal errors).</summary>
    public const double HuberK = 1.345;

    /// <summary>
    /// Fits the model. <paramref name="coreHours"/> are the consumed core-hours of each observation's run.
    /// </summary>
    public static FittedCostModel Fit(IReadOnlyList<CostObservation> data, IReadOnlyList<double> coreHours, CostFitOptions options, int runsSkipped = 0, IProgress<double>? progress = null)
    {
        if (data.Count != coreHours.Count)
        {
            throw new ArgumentException("One cost per observation is needed.", nameof(coreHours));
        }

        if (data.Count < 3)
        {
            throw new Domain.InvalidInputException(new[] { $"the run logs hold {data.Count} usable runs (completed, or partial with t_end): expected at least 3 to fit a cost model" });
        }

        var y = data.Select((o, i) => Math.Log(coreHours[i]) + o.LogSpeed).ToArray();
        var candidates = FeatureSet.Candidates(data, options.MinRunsPerCluster);
        var folds = Math.Min(options.Folds, data.Count);
        var assignment = FoldAssignment(data.Count, folds, options.Seed);
        var scores = new List<FeatureSetScore>();
        foreach (var set in candidates)
        {
            scores.Add(CrossValidate(set, data, y, assignment, folds, options));
            progress?.Report((double)scores.Count / (candidates.Count + 1));
        }

        var best = scores.MinBy(s => s.CvMse)!;
        var chosenScore = scores.Where(s => s.CvMse <= best.CvMse + best.CvMseStandardError).OrderBy(s => s.Parameters).First();
        var chosen = candidates.Single(c => c.Name == chosenScore.Name);

        var all = Enumerable.Range(0, data.Count).ToArray();
        var (fit, weights, usedPrior) = FitSet(chosen, data, y, all, options);
        var rows = data.Select(chosen.Row).ToArray();
        var p = chosen.Terms.Count;
        var n = data.Count;
        var influential = new List<InfluentialRun>();
        for (var i = 0; i < n; i++)
        {
            var h = fit.Leverage[i];
            var r = Math.Sqrt(weights[i]) * fit.Residuals[i];
            var cooks = r * r / (p * fit.ResidualVariance) * h / ((1 - h) * (1 - h));
            if (cooks > 4.0 / n)
            {
                influential.Add(new InfluentialRun(data[i].Id, cooks));
            }
        }

        var covariance = fit.UnscaledCovariance;
        progress?.Report(1);
        return new FittedCostModel
        {
            FeatureSet = chosen.Name,
            Terms = chosen.Terms.ToArray(),
            Coefficients = fit.Coefficients.ToArray(),
            StandardErrors = fit.StandardErrors,
            UnscaledCovariance = Enumerable.Range(0, p).Select(i => Enumerable.Range(0, p).Select(j => covariance[i, j]).ToArray()).ToArray(),
            ResidualSd = fit.ResidualSd,
            DegreesOfFreedom = fit.DegreesOfFreedom,
            RSquared = fit.RSquared,
            // Duan's smearing, weighted by the robust weights: runs the fit discounted do not move the mean either.
            Smearing = Enumerable.Range(0, n).Sum(i => weights[i] * Math.Exp(fit.Residuals[i])) / weights.Sum(),
            RunCount = n,
            RunsSkipped = runsSkipped,
            Robust = options.Robust,
            UsedPrior = usedPrior,
            TermMin = Enumerable.Range(0, p).Select(j => rows.Min(r => r[j])).ToArray(),
            TermMax = Enumerable.Range(0, p).Select(j => rows.Max(r => r[j])).ToArray(),
            MaxLeverage = fit.Leverage.Max(),
            CvIntervalLevel = options.IntervalLevel,
            Folds = folds,
            Candidates = scores.ToArray(),
            Influential = influential.OrderByDescending(r => r.CooksDistance).ToArray(),
            DownWeighted = options.Robust
                ? Enumerable.Range(0, n).Where(i => weights[i] < 0.999).OrderBy(i => weights[i])
                    .Select(i => new DownWeightedRun(data[i].Id, weights[i], (Math.Exp(fit.Residuals[i]) - 1) * 100)).ToArray()
                : Array.Empty<DownWeightedRun>(),
            Clusters = data.GroupBy(o => o.Cluster).ToDictionary(g => g.Key, g => g.Count()),
        };
    }

    /// <summary>True when <paramref name="runs"/> are too few to fit <paramref name="parameters"/> coefficients on the data alone.</summary>
    public static bool NeedsPrior(int runs, int parameters, CostFitOptions options) =>
        runs < Math.Max(options.MinimumRuns, options.RunsPerCoefficient * parameters);

    private static FeatureSetScore CrossValidate(FeatureSet set, IReadOnlyList<CostObservation> data, double[] y, int[] assignment, int folds, CostFitOptions options)
    {
        var foldMse = new List<double>();
        var absPct = new List<double>();
        var covered = 0;
        var tested = 0;
        for (var f = 0; f < folds; f++)
        {
            var train = Enumerable.Range(0, data.Count).Where(i => assignment[i] != f).ToArray();
            var test = Enumerable.Range(0, data.Count).Where(i => assignment[i] == f).ToArray();
            if (test.Length == 0 || train.Length == 0)
            {
                continue;
            }

            var (fit, _, _) = FitSet(set, data, y, train, options);
            var squared = 0.0;
            foreach (var i in test)
            {
                var x = set.Row(data[i]);
                var interval = PredictionInterval.Of(fit, x, options.IntervalLevel);
                var error = interval.Center - y[i];
                squared += error * error;
                absPct.Add(Math.Abs(Math.Exp(error) - 1) * 100);
                covered += y[i] >= interval.Low && y[i] <= interval.High ? 1 : 0;
                tested++;
            }

            foldMse.Add(squared / test.Length);
        }

        var mean = foldMse.Average();
        var se = foldMse.Count > 1 ? foldMse.StandardDeviation() / Math.Sqrt(foldMse.Count) : 0;
        return new FeatureSetScore(set.Name, set.Terms.Count, mean, se, absPct.Median(), (double)covered / tested);
    }

    /// <summary>Fits one feature set on the rows <paramref name="rows"/>: OLS or Huber, with the prior when the rows are few or the design is degenerate.</summary>
    private static (LinearFit Fit, double[] Weights, bool UsedPrior) FitSet(FeatureSet set, IReadOnlyList<CostObservation> data, double[] y, int[] rows, CostFitOptions options)
    {
        var p = set.Terms.Count;
        var x = Matrix<double>.Build.Dense(rows.Length, p, (i, j) => FeatureSet.Value(set.Terms[j], data[rows[i]]));
        var target = Vector<double>.Build.Dense(rows.Length, i => y[rows[i]]);
        var usePrior = NeedsPrior(rows.Length, p, options);
        var means = set.Terms.Select(FeatureSet.PriorMean).ToArray();
        var precision = options.PriorResidualSd * options.PriorResidualSd / (options.PriorSd * options.PriorSd);
        var precisions = set.Terms.Select(t => t == "intercept" ? 0.0 : precision).ToArray();

        LinearFit Solve(double[]? w)
        {
            if (!usePrior)
            {
                try
                {
                    return LinearFit.Solve(x, target, w);
                }
                catch (ArgumentException)
                {
                    // A term that does not vary in these runs (all at one level, say): lean on the prior.
                    usePrior = true;
                }
            }

            return LinearFit.Solve(x, target, w, means, precisions);
        }

        var weights = Enumerable.Repeat(1.0, rows.Length).ToArray();
        var fit = Solve(null);
        if (options.Robust)
        {
            for (var iteration = 0; iteration < 50; iteration++)
            {
                var scale = fit.Residuals.Select(Math.Abs).Median() / 0.6745;
                if (!(scale > 0))
                {
                    break;
                }

                var next = fit.Residuals.Select(r => Math.Abs(r / scale) <= HuberK ? 1.0 : HuberK / Math.Abs(r / scale)).ToArray();
                var refit = Solve(next);
                var change = refit.Coefficients.Subtract(fit.Coefficients).AbsoluteMaximum();
                fit = refit;
                weights = next;
                if (change < 1e-9)
                {
                    break;
                }
            }
        }

        return (fit, weights, usePrior);
    }

    /// <summary>Seeded assignment of each index to one of <paramref name="folds"/> folds of near-equal size.</summary>
    private static int[] FoldAssignment(int count, int folds, int seed)
    {
        var order = Enumerable.Range(0, count).ToArray();
        new Random(seed).Shuffle(order);
        var assignment = new int[count];
        for (var k = 0; k < count; k++)
        {
            assignment[order[k]] = k % folds;
        }

        return assignment;
    }
}
