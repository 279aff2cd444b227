using BenchmarkDotNet.Attributes;
using Campaign.Core.CostModel;
using Campaign.Core.Domain;
using Campaign.Core.Physics;

namespace Campaign.Bench;

/// <summary>The estimate job's two steps on synthetic data (invented): fitting the cost model and estimating a proposal.</summary>
[MemoryDiagnoser]
public class FitBenchmarks
{
    private List<CostObservation> _data = null!;
    private List<double> _cost = null!;

    /// <summary>Number of run logs.</summary>
    [Params(100, 1_000, 10_000)]
    public int Logs { get; set; }

    [GlobalSetup]
    public void Setup() => (_data, _cost) = Quick.Logs(Logs);

    [Benchmark]
    public double RobustFitWithCrossValidation() => CostModelFitter.Fit(_data, _cost, new CostFitOptions { Robust = true }).ResidualSd;
}

/// <summary>A proposal estimate (rows and Monte Carlo totals) for many candidates.</summary>
[MemoryDiagnoser]
public class EstimateBenchmarks
{
    private static readonly Dictionary<string, ClusterProfile> Clusters = new()
    {
        ["a"] = new("a", "", BatchSystemKind.Slurm, 128, 512, 48, true, 1, 1, 100, 50, 3, 20),
    };

    private List<Candidate> _candidates = null!;
    private FittedCostModel _model = null!;

    /// <summary>Number of candidate rows.</summary>
    [Params(1_000, 10_000, 100_000)]
    public int Rows { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        var (data, cost) = Quick.Logs(1_000);
        _model = CostModelFitter.Fit(data, cost, new CostFitOptions { Robust = true });
        var random = new Random(9);
        _candidates = Enumerable.Range(0, Rows).Select(i => new Candidate("c" + i, new RunSpec("c" + i,
            new BinaryConfiguration(MassRatio.From(1 + 7 * random.NextDouble()), Spin.From(0, 0, 0.9 * random.NextDouble()), Spin.From(0, 0, 0), 0.015 + 0.004 * random.NextDouble()),
            new[] { 1 }, 256), "a", 1, false, null)).ToList();
    }

    [Benchmark]
    public double Estimate() => ProposalEstimator.Estimate(_candidates, Clusters, _model, StorageModel.RuleOfThumb, new LengthSettings(), new EstimateOptions()).Total.Median;
}

/// <summary>Reconcile cycles over many tracked runs against an in-process batch backend (see <see cref="TickBench"/>).</summary>
public class TickBenchmarks
{
    /// <summary>Number of tracked runs.</summary>
    [Params(1_000, 10_000)]
    public int Runs { get; set; }

    [Benchmark]
    public double FourCycles()
    {
        var (first, started, steady, turnover, _) = TickBench.Measure(Runs);
        return first + started + steady + turnover;
    }
}
