using Campaign.Core.Domain;
using Campaign.Core.Physics;
using MathNet.Numerics.Distributions;
using MathNet.Numerics.LinearAlgebra;

namespace Campaign.Core.CostModel;

/// <summary>
/// Turns candidates into proposal numbers: for each configuration and level the predicted core-hours with their
/// interval, wall hours, job segments, node-hours, charged core-hours and storage; and totals whose interval is
/// computed by Monte Carlo, because the runs share the model's parameter uncertainty: each draw takes one
/// coefficient vector b ~ N(b_hat, s^2 (X'WX + P)^-1) for all runs and an independent residual N(0, s^2) per run.
/// </summary>
public static class ProposalEstimator
{
    /// <summary>Estimates every candidate. <paramref name="model"/> may be null when every candidate gives core_hours.</summary>
    public static ProposalEstimate Estimate(
        IReadOnlyList<Candidate> candidates,
        IReadOnlyDictionary<string, MachineProfile> machines,
        FittedCostModel? model,
        StorageModel storage,
        LengthSettings lengthSettings,
        EstimateOptions options)
    {
        CheckOptions(options, candidates, machines);
        var missingModel = candidates.Where(c => c.CoreHours is null).Select(c => c.Id).ToList();
        if (model is null && missingModel.Count > 0)
        {
            throw new InvalidInputException(new[]
            {
                $"no cost model in the workspace and {missingModel.Count} candidates without core_hours ({string.Join(", ", missingModel.Take(5))}{(missingModel.Count > 5 ? ", ..." : "")}): expected 'campaign logs import' and 'campaign model fit' first, or a core_hours column",
            });
        }

        var rows = new List<EstimateRow>();
        var draws = new List<DrawSpec>();
        foreach (var candidate in candidates)
        {
            var machine = machines[candidate.Machine];
            var config = candidate.Spec.Configuration;
            var length = SimulatedLength.Estimate(config, lengthSettings).Total;
            var levels = candidate.Spec.Levels.OrderBy(l => l).ToList();
            var predictions = model is null
                ? null
                : levels.Select(l => model.Predict(CostObservation.For(candidate.Id, config, l, candidate.Spec.Cores, machine, length), options.Interval)).ToList();
            var shares = predictions?.Select(p => p.Median).ToList() ?? levels.Select(l => Math.Pow(2, l)).ToList();
            for (var k = 0; k < levels.Count; k++)
            {
                var level = levels[k];
                if (candidate.CoreHours is { } given)
                {
                    var share = given * shares[k] / shares.Sum();
                    rows.Add(Row(candidate, level, "run", machine, length, share, share, share, share, storage, options, "given", Array.Empty<string>(), 0, double.PositiveInfinity));
                    draws.Add(new DrawSpec(null, Math.Log(share), machine, candidate.Spec.Cores));
                }
                else
                {
                    var p = predictions![k];
                    rows.Add(Row(candidate, level, "run", machine, length, p.Median, p.Mean, p.Low, p.High, storage, options, "model", p.Extrapolation, p.LogStandardError, model!.DegreesOfFreedom));
                    draws.Add(new DrawSpec(model!.Features.Row(CostObservation.For(candidate.Id, config, level, candidate.Spec.Cores, machine, length)), -Math.Log(machine.RelativeSpeed), machine, candidate.Spec.Cores));
                }
            }

            if (options.EccentricityTrials > 0 && model is not null)
            {
                var observation = CostObservation.For(candidate.Id, config, levels[0], candidate.Spec.Cores, machine, options.EccentricityTrialLength);
                var p = model.Predict(observation, options.Interval);
                var n = options.EccentricityTrials;
                rows.Add(Row(candidate, levels[0], "ecc", machine, n * options.EccentricityTrialLength, n * p.Median, n * p.Mean, n * p.Low, n * p.High, storage, options, "model", p.Extrapolation, p.LogStandardError, model.DegreesOfFreedom, perRunLength: options.EccentricityTrialLength, runs: n));
                var x = model.Features.Row(observation);
                for (var i = 0; i < n; i++)
                {
                    draws.Add(new DrawSpec(x, -Math.Log(machine.RelativeSpeed), machine, candidate.Spec.Cores));
                }
            }
        }

        var (total, byMachine) = Totals(draws, model, options);
        return new ProposalEstimate(rows, total, byMachine, options.Interval, options.Samples, options.Seed);
    }

    private static void CheckOptions(EstimateOptions options, IReadOnlyList<Candidate> candidates, IReadOnlyDictionary<string, MachineProfile> machines)
    {
        var checks = new FieldChecks();
        checks.InOpenRange("--interval", options.Interval, 0, 1);
        checks.InRange("--checkpoint-margin", options.CheckpointMarginHours, 0, 100);
        checks.InRange("--ecc-trials", options.EccentricityTrials, 0, 20);
        checks.Positive("--ecc-length", options.EccentricityTrialLength, 100_000);
        checks.InRange("--samples", options.Samples, 100, 1_000_000);
        foreach (var name in candidates.Select(c => c.Machine).Distinct())
        {
            if (!machines.TryGetValue(name, out var machine))
            {
                checks.Add("cluster", name, "a machine with a profile: " + string.Join(", ", machines.Keys));
            }
            else if (machine.WallLimitHours <= options.CheckpointMarginHours)
            {
                checks.Add("--checkpoint-margin", FieldProblem.Show(options.CheckpointMarginHours), $"less than the wall-time limit of {name}, {FieldProblem.Show(machine.WallLimitHours)} h");
            }
        }

        checks.ThrowIfAny();
    }

    private static EstimateRow Row(Candidate c, int level, string kind, MachineProfile machine, double length, double median, double mean, double low, double high,
        StorageModel storage, EstimateOptions options, string source, IReadOnlyList<string> extrapolation, double logSe, double dof, double? perRunLength = null, int runs = 1)
    {
        var cores = c.Spec.Cores;
        var wall = median / cores;
        var usable = machine.WallLimitHours - options.CheckpointMarginHours;
        var segments = runs * (int)Math.Max(1, Math.Ceiling(wall / runs / usable - 1e-12));
        var nodeHours = wall * machine.NodesFor(cores);
        return new EstimateRow(
            c.Id,
            level,
            kind,
            machine.Name,
            cores,
            length,
            median,
            mean,
            low,
            high,
            wall,
            segments,
            nodeHours,
            machine.ChargedCoreHours(cores, wall),
            machine.ChargedCoreHours(cores, high / cores),
            storage.CheckpointGb(level),
            runs * storage.OutputGb(level, perRunLength ?? length),
            source,
            extrapolation,
            logSe,
            dof,
            runs);
    }

    /// <summary>One simulation in the Monte Carlo: its feature row (null for a fixed given cost), offset and machine.</summary>
    private sealed record DrawSpec(double[]? X, double Offset, MachineProfile Machine, int Cores);

    private static (EstimateTotal Total, IReadOnlyDictionary<string, EstimateTotal> ByMachine) Totals(IReadOnlyList<DrawSpec> draws, FittedCostModel? model, EstimateOptions options)
    {
        var random = new Random(options.Seed);
        var samples = options.Samples;
        var machineNames = draws.Select(d => d.Machine.Name).Distinct().Order(StringComparer.Ordinal).ToList();
        var consumed = new double[samples];
        var charged = new double[samples];
        var perMachine = machineNames.ToDictionary(m => m, _ => (Consumed: new double[samples], Charged: new double[samples]));
        Matrix<double>? cholesky = null;
        Vector<double>? beta = null;
        if (model is not null)
        {
            var p = model.Coefficients.Length;
            var covariance = Matrix<double>.Build.Dense(p, p, (i, j) => model.UnscaledCovariance[i][j] * model.ResidualSd * model.ResidualSd);
            cholesky = covariance.Cholesky().Factor;
            beta = Vector<double>.Build.DenseOfArray(model.Coefficients);
        }

        var chargeRatio = draws.Select(ChargeRatio).ToArray();
        var z = new double[beta?.Count ?? 0];
        for (var s = 0; s < samples; s++)
        {
            Vector<double>? b = null;
            if (beta is not null)
            {
                for (var j = 0; j < z.Length; j++)
                {
                    z[j] = Normal.Sample(random, 0, 1);
                }

                b = beta + cholesky! * Vector<double>.Build.DenseOfArray(z);
            }

            for (var i = 0; i < draws.Count; i++)
            {
                var d = draws[i];
                double cost;
                if (d.X is null)
                {
                    cost = Math.Exp(d.Offset);
                }
                else
                {
                    var y = d.Offset;
                    for (var j = 0; j < d.X.Length; j++)
                    {
                        y += d.X[j] * b![j];
                    }

                    cost = Math.Exp(y + Normal.Sample(random, 0, model!.ResidualSd));
                }

                consumed[s] += cost;
                charged[s] += cost * chargeRatio[i];
                var bucket = perMachine[d.Machine.Name];
                bucket.Consumed[s] += cost;
                bucket.Charged[s] += cost * chargeRatio[i];
            }
        }

        return (Summary(consumed, charged, options.Interval), perMachine.ToDictionary(kv => kv.Key, kv => Summary(kv.Value.Consumed, kv.Value.Charged, options.Interval)));
    }

    /// <summary>Charged core-hours per consumed core-hour on the draw's machine (whole-node rounding and charge factor).</summary>
    private static double ChargeRatio(DrawSpec d) => d.Machine.ChargedCoreHours(d.Cores, 1) / d.Cores;

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
