using BenchmarkDotNet.Running;
using Campaign.Bench;

// `dotnet run -c Release --project bench/Campaign.Bench -- quick` prints one timed run per size (the figures in
// docs/performance.md); any other arguments go to BenchmarkDotNet (e.g. `-- --filter '*Selection*'`).
if (args.Length > 0 && args[0] == "quick")
{
    Quick.Run(args.Skip(1).ToList());
    return;
}

BenchmarkSwitcher.FromAssembly(typeof(SelectionBenchmarks).Assembly).Run(args);
