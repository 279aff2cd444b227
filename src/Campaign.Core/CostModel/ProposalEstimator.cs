using Campaign.Core.Domain;
using Campaign.Core.Physics;
using MathNet.Numerics.Distributions;
using MathNet.Numerics.LinearAlgebra;

namespace Campaign.Core.CostModel;

/// <summary>
/// Turns candidates into proposal numbers: for each configuration and level the predicted core-hours with their
/// interval, wall hours, job legs, node-hours, charged core-hours and storage; and totals whose interval is
/// computed by Monte Carlo, because the runs share the model's parameter uncertainty: each draw takes one
/// coefficient vector b ~ N(b_hat, s^2 (X'WX + P)^-1) for all runs and an independent residual N(0, s^2) per run.
/// </summary>
public static class ProposalEstimator
{
    /// <summary>Estimates every candidate. <paramref name="model"/> may be null when every candidate gives core_hours.</summary>
    public static ProposalEstimate Estimate(
        IReadOnlyList<Candidate> candidates,
        IReadOnlyDictionary<string, ClusterProfile> clusters,
        FittedCostModel? model,
        StorageModel storage,
        LengthSettings lengthSettings,
        EstimateOptions options)
    {
        CheckOptions(options, candidates, clusters);
        var missingModel = candidates.Where(c => c.CoreHours is null).Select(c => c.Id).ToList();
        if (model is null && missingModel.Count > 0)
        {
            throw new InvalidInputException(new[]
            {
                $"no cost model in the workspace and {missingModel.Count} candidates without core_hours ({string.Join(", ", missingModel.Take(5))}{(missingModel.Count > 5 ? $", ... and {missingModel.Count - 5} more" : "")}): expected 'campaign logs import' and 'campaign model fit' first, or a core_hours column",
            });
        }

        // Candidates are independent: estimated in parallel, gathered in their order.
        var perCandidate = new (List<EstimateRow> Rows, List<DrawSpec> Draws)[candidates.Count];
        Parallel.For(0, candidates.Count, index =>
        {
            var candidate = candidates[index];
            var rows = new List<EstimateRow>();
            var draws = new List<DrawSpec>();
            var cluster = clusters[candidate.Cluster];
            var config = candidate.Spec.Configuration;
            var length = SimulatedLength.Estimate(config, lengthSettings).Total;
            var levels = candidate.Spec.Levels.OrderBy(l => l).ToList();
            var predictions = model is null
                ? null
                : levels.Select(l => model.Predict(CostObservation.For(candidate.Id, config, l, candidate.Spec.Cores, cluster, length), options.Interval)).ToList();
            var shares = predictions?.Select(p => p.Median).ToList() ?? levels.Select(l => Math.Pow(2, l)).ToList();
            for (var k = 0; k < levels.Count; k++)
            {
                var level = levels[k];
                if (candidate.CoreHours is { } given)
                {
                    var share = given * shares[k] / shares.Sum();
                    rows.Add(Row(candidate, level, "run", cluster, length, share, share, share, share, storage, options, "given", Array.Empty<string>(), 0, double.PositiveInfinity));
                    draws.Add(new DrawSpec(null, Math.Log(share), cluster, candidate.Spec.Cores));
                }
                else
                {
                    var p = predictions![k];
                    rows.Add(Row(candidate, level, "run", cluster, length, p.Median, p.Mean, p.Low, p.High, storage, options, "model", p.Extrapolation, p.LogStandardError, model!.DegreesOfFreedom));
                    draws.Add(new DrawSpec(model!.Features.Row(CostObservation.For(candidate.Id, config, level, candidate.Spec.Cores, cluster, length)), -Math.Log(cluster.RelativeSpeed), cluster, candidate.Spec.Cores));
                }
            }

            if (options.EccentricityTrials > 0 && model is not null)
            {
                var observation = CostObservation.For(candidate.Id, config, levels[0], candidate.Spec.Cores, cluster, options.EccentricityTrialLength);
                var p = model.Predict(observation, options.Interval);
                var n = options.EccentricityTrials;
                rows.Add(Row(candidate, levels[0], "ecc", cluster, n * options.EccentricityTrialLength, n * p.Median, n * p.Mean, n * p.Low, n * p.High, storage, options, "model", p.Extrapolation, p.LogStandardError, model.DegreesOfFreedom, perRunLength: options.EccentricityTrialLength, runs: n));
                var x = model.Features.Row(observation);
                for (var i = 0; i < n; i++)
                {
                    draws.Add(new DrawSpec(x, -Math.Log(cluster.RelativeSpeed), cluster, candidate.Spec.Cores));
                }
            }
            perCandidate[index] = (rows, draws);
        });
        var rows = perCandidate.SelectMany(p => p.Rows).ToList();
        var draws = perCandidate.SelectMany(p => p.Draws).ToList();

        var (total, byCluster) = Totals(draws, model, options);
        return new ProposalEstimate(rows, total, byCluster, options.Interval, options.Samples, options.Seed);
    }

    private static void CheckOptions(EstimateOptions options, IReadOnlyList<Candidate> candidates, IReadOnlyDictionary<string, ClusterProfile> clusters)
    {
        var checks = new FieldChecks();
        checks.InOpenRange("--interval", options.Interval, 0, 1);
        checks.InRange("--checkpoint-margin", options.CheckpointMarginHours, 0, 100);
        checks.InRange("--ecc-trials", options.EccentricityTrials, 0, 20);
        checks.Positive("--ecc-length", options.EccentricityTrialLength, 100_000);
        checks.InRange("--samples", options.Samples, 100, 1_000_000);
        foreach (var name in candidates.Select(c => c.Cluster).Distinct())
        {
            if (!clusters.TryGetValue(name, out var cluster))
            {
                checks.Add("cluster", name, "a cluster with a profile: " + string.Join(", ", clusters.Keys));
            }
            else if (cluster.WallLimitHours <= options.CheckpointMarginHours)
            {
                checks.Add("--checkpoint-margin", FieldProblem.Show(options.CheckpointMarginHours), $"less than the wall-time limit of {name}, {FieldProblem.Show(cluster.WallLimitHours)} h");
            }
        }

        checks.ThrowIfAny();
    }

    private static EstimateRow Row(Candidate c, int level, string kind, ClusterProfile cluster, double length, double median, double mean, double low, double high,
        StorageModel storage, EstimateOptions options, string source, IReadOnlyList<string> extrapolation, double logSe, double dof, double? perRunLength = null, int runs = 1)
    {
        var cores = c.Spec.Cores;
        var wall = median / cores;
        var usable = cluster.WallLimitHours - options.CheckpointMarginHours;
        var legs = runs * (int)Math.Max(1, Math.Ceiling(wall / runs / usable - 1e-12));
        var nodeHours = wall * cluster.NodesFor(cores);
        return new EstimateRow(
            c.Id,
            level,
            kind,
            cluster.Name,
            cores,
            length,
            median,
            mean,
            low,
            high,
            wall,
            legs,
            nodeHours,
            cluster.ChargedCoreHours(cores, wall),
            cluster.ChargedCoreHours(cores, high / cores),
            storage.CheckpointGb(level),
            runs * storage.OutputGb(level, perRunLength ?? length),
            source,
            extrapolation,
            logSe,
            dof,
            runs);
    }

    /// <summary>One simulation in the Monte Carlo: its feature row (null for a fixed given cost), offset and cluster.</summary>
    private sealed record DrawSpec(double[]? X, double Offset, ClusterProfile Cluster, int Cores);

    /// <summary>Rows of one cluster above which the residual part of its sum is drawn from its exact moments (see docs/cost-model.md).</summary>
    public const int CentralLimitRows = 500;

    private sealed class ClusterDraws
    {
        public required string Name { get; init; }

        public double FixedConsumed { get; set; }

        public double FixedCharged { get; set; }

        public List<(double[] X, double Offset, double Ratio)> Modelled { get; } = new();
    }

    private static (EstimateTotal Total, IReadOnlyDictionary<string, EstimateTotal> ByCluster) Totals(IReadOnlyList<DrawSpec> draws, FittedCostModel? model, EstimateOptions options)
    {
        var samples = options.Samples;
        var groups = draws.GroupBy(d => d.Cluster.Name).OrderBy(g => g.Key, StringComparer.Ordinal).Select(g =>
        {
            var cluster = new ClusterDraws { Name = g.Key };
            foreach (var d in g)
            {
                var ratio = ChargeRatio(d);
                if (d.X is null)
                {
                    cluster.FixedConsumed += Math.Exp(d.Offset);
                    cluster.FixedCharged += Math.Exp(d.Offset) * ratio;
                }
                else
                {
                    cluster.Modelled.Add((d.X, d.Offset, ratio));
                }
            }

            return cluster;
        }).ToList();

        var sampler = model is null ? null : new CoefficientSampler(model);
        var p = model?.Coefficients.Length ?? 0;

        // Column-major features per cluster, so that each sample's linear predictors are a few passes over arrays.
        var columns = groups.Select(g => Enumerable.Range(0, p).Select(k => g.Modelled.Select(m => m.X[k]).ToArray()).ToArray()).ToList();
        var offsets = groups.Select(g => g.Modelled.Select(m => m.Offset).ToArray()).ToList();
        var ratios = groups.Select(g => g.Modelled.Select(m => m.Ratio).ToArray()).ToList();
        var sd = model?.ResidualSd ?? 0;
        var mean1 = Math.Exp(sd * sd / 2); // E exp(e), e ~ N(0, sd^2)
        var variance1 = Math.Exp(sd * sd) * (Math.Exp(sd * sd) - 1); // Var exp(e)
        var consumed = new double[samples];
        var charged = new double[samples];
        var perCluster = groups.Select(_ => (Consumed: new double[samples], Charged: new double[samples])).ToArray();

        // Each sample has its own generator seeded from the seed and its index: the result does not depend on
        // how many threads run the samples.
        Parallel.For(0, samples, s =>
        {
            var random = new Random(unchecked((options.Seed * 1_000_003) + s));
            var b = sampler?.Draw(random) ?? new double[p];

            for (var g = 0; g < groups.Count; g++)
            {
                var n = offsets[g].Length;
                var width = System.Numerics.Vector<double>.Count;
                double c, h;
                if (n >= CentralLimitRows)
                {
                    // Given the coefficients, the sum of n independent log-normal residual factors: exact mean and
                    // (co)variance, drawn as a bivariate normal (the central limit theorem, n >= 500). One fused,
                    // vectorised pass: linear predictor, exp, and the five sums.
                    var ratio = ratios[g];
                    var offset = offsets[g];
                    var cols = columns[g];
                    var vbk = new System.Numerics.Vector<double>[p];
                    for (var k = 0; k < p; k++)
                    {
                        vbk[k] = new System.Numerics.Vector<double>(b[k]);
                    }

                    var va = System.Numerics.Vector<double>.Zero;
                    var var_ = System.Numerics.Vector<double>.Zero;
                    var vbb = System.Numerics.Vector<double>.Zero;
                    var vbr = System.Numerics.Vector<double>.Zero;
                    var vbrr = System.Numerics.Vector<double>.Zero;
                    var i = 0;
                    for (; i <= n - width; i += width)
                    {
                        var y = new System.Numerics.Vector<double>(offset, i);
                        for (var k = 0; k < p; k++)
                        {
                            y += new System.Numerics.Vector<double>(cols[k], i) * vbk[k];
                        }

                        var m = System.Numerics.Vector.Exp(y);
                        var r = new System.Numerics.Vector<double>(ratio, i);
                        var mm = m * m;
                        va += m;
                        var_ += m * r;
                        vbb += mm;
                        vbr += mm * r;
                        vbrr += mm * r * r;
                    }

                    var mu = new double[n - i];
                    for (var t = 0; t < mu.Length; t++)
                    {
                        mu[t] = offset[i + t];
                        for (var k = 0; k < p; k++)
                        {
                            mu[t] += cols[k][i + t] * b[k];
                        }
                    }

                    double a = System.Numerics.Vector.Sum(va), ar = System.Numerics.Vector.Sum(var_), bb = System.Numerics.Vector.Sum(vbb), br = System.Numerics.Vector.Sum(vbr), brr = System.Numerics.Vector.Sum(vbrr);
                    for (var t = 0; t < mu.Length; t++, i++)
                    {
                        var m = Math.Exp(mu[t]);
                        var r = ratio[i];
                        a += m;
                        ar += m * r;
                        bb += m * m;
                        br += m * m * r;
                        brr += m * m * r * r;
                    }

                    var varC = variance1 * bb;
                    var varH = variance1 * brr;
                    var cov = variance1 * br;
                    var z1 = Normal.Sample(random, 0, 1);
                    var z2 = Normal.Sample(random, 0, 1);
                    var sc = Math.Sqrt(varC);
                    var rho = sc > 0 && varH > 0 ? Math.Clamp(cov / (sc * Math.Sqrt(varH)), -1, 1) : 0;
                    c = mean1 * a + sc * z1;
                    h = mean1 * ar + Math.Sqrt(varH) * (rho * z1 + Math.Sqrt(1 - rho * rho) * z2);
                }
                else
                {
                    c = 0;
                    h = 0;
                    for (var i = 0; i < n; i++)
                    {
                        var y = offsets[g][i];
                        for (var k = 0; k < p; k++)
                        {
                            y += columns[g][k][i] * b[k];
                        }

                        var cost = Math.Exp(y + Normal.Sample(random, 0, sd));
                        c += cost;
                        h += cost * ratios[g][i];
                    }
                }

                c += groups[g].FixedConsumed;
                h += groups[g].FixedCharged;
                perCluster[g].Consumed[s] = c;
                perCluster[g].Charged[s] = h;
            }

            var totalConsumed = 0.0;
            var totalCharged = 0.0;
            for (var g = 0; g < groups.Count; g++)
            {
                totalConsumed += perCluster[g].Consumed[s];
                totalCharged += perCluster[g].Charged[s];
            }

            consumed[s] = totalConsumed;
            charged[s] = totalCharged;
        });

        return (Summary(consumed, charged, options.Interval), groups.Select((g, k) => (g.Name, k)).ToDictionary(x => x.Name, x => Summary(perCluster[x.k].Consumed, perCluster[x.k].Charged, options.Interval)));
    }

    /// <summary>Charged core-hours per consumed core-hour on the draw's cluster (whole-node rounding and charge factor).</summary>
    private static double ChargeRatio(DrawSpec d) => d.Cluster.ChargedCoreHours(d.Cores, 1) / d.Cores;

    private static EstimateTotal Summary(double[] consumed, double[] charged, double interval)
    {
        var lowP = (1 - interval) / 2;
        var highP = (1 + interval) / 2;
        var c = consumed.Order().ToArray();
        var h = charged.Order().ToArray();
        return new EstimateTotal(Quantile(c, 0.5), consumed.Average(), Quantile(c, lowP), Quantile(c, highP), Quantile(h, 0.5), Quantile(h, lowP), Quantile(h, highP));
    }

    private static double Quantile(double[] sorted, double p) => MathNet.Numerics.Statistics.SortedArrayStatistics.Quantile(sorted, p);
}
