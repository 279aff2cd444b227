using BenchmarkDotNet.Attributes;
using Campaign.Core.Domain;
using Campaign.Core.Forecast;

namespace Campaign.Bench;

/// <summary>The forecast's discrete-event Monte Carlo on synthetic campaigns (invented, for timing only).</summary>
[MemoryDiagnoser]
public class ForecastBenchmarks
{
    private IReadOnlyList<ForecastRun> _runs = null!;
    private Dictionary<string, ForecastCluster> _clusters = null!;

    [Params(500)]
    public int Runs { get; set; }

    [Params(10_000)]
    public int Replicas { get; set; }

    [GlobalSetup]
    public void Setup() => (_runs, _clusters) = Campaign(Runs);

    /// <summary>n runs over two clusters, costs log-normal around 1e5 core-hours, queue waits and an allocation with quarters.</summary>
    public static (IReadOnlyList<ForecastRun>, Dictionary<string, ForecastCluster>) Campaign(int n)
    {
        var random = new Random(5);
        var runs = Enumerable.Range(0, n).Select(i => new ForecastRun("r" + i, i % 3 == 0 ? "b" : "a", 128, null, 0, 1e5 * Math.Exp(random.NextDouble() - 0.5), 0, false)).ToList();
        var quarters = Enumerable.Range(0, 4).Select(q => new AllocationWindow(new DateOnly(2027, 1 + 3 * q, 1), new DateOnly(2027, 3 + 3 * q, 28), 2e7)).ToList();
        ClusterProfile Cluster(string name) => new(name, "", BatchSystemKind.Slurm, 128, 512, 48, true, 1, 1, 50, 20, 3, 20);
        var clusters = new Dictionary<string, ForecastCluster>
        {
            ["a"] = new(Cluster("a"), new Allocation("a", 8e7, AllocationUnit.CoreHours, new DateOnly(2027, 1, 1), new DateOnly(2027, 12, 31), quarters), 0),
            ["b"] = new(Cluster("b"), null, 0),
        };
        return (runs, clusters);
    }

    [Benchmark]
    public double Forecast() => CampaignForecaster.Run(_runs, _clusters, null, new DateTimeOffset(2027, 1, 1, 0, 0, 0, TimeSpan.Zero), new ForecastOptions { Replicas = Replicas }).ProbabilityFits;
}
