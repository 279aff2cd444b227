using BenchmarkDotNet.Attributes;
using Campaign.Core.Selection;

namespace Campaign.Bench;

/// <summary>Selection on synthetic instances: coverage (lazy greedy and friends) and the exact knapsack.</summary>
[MemoryDiagnoser]
public class SelectionBenchmarks
{
    private SelectionProblem _coverage = null!;
    private SelectionProblem _value = null!;

    /// <summary>Number of candidates.</summary>
    [Params(1_000, 5_000, 20_000)]
    public int Candidates { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        _coverage = Instances.Coverage(Candidates);
        _value = Instances.Coverage(Candidates, objective: SelectionObjective.Value);
    }

    [Benchmark]
    public double Coverage() => Selector.Solve(_coverage).Objective;

    [Benchmark]
    public double Value() => Selector.Solve(_value).Objective;

    [Benchmark]
    public int LazyGreedy() => Selector.GreedyPhase(_coverage, lazy: true).Chosen.Count;

    [Benchmark]
    public int PlainGreedy() => Candidates <= 2_000 ? Selector.GreedyPhase(_coverage, lazy: false).Chosen.Count : 0;
}
