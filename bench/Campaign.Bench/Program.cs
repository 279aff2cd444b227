using System.Diagnostics;
using System.Globalization;
using BenchmarkDotNet.Running;
using Campaign.Bench;
using Campaign.Core.Selection;

// `dotnet run -c Release --project bench/Campaign.Bench -- quick` prints one timed run per size (the figures in
// docs/performance.md); any other arguments go to BenchmarkDotNet (e.g. `-- --filter '*Selection*'`).
if (args.Length > 0 && args[0] == "quick")
{
    var inv = CultureInfo.InvariantCulture;
    Console.WriteLine("problem                 n   seconds  objective  upper bound  gap %  chosen  method");
    foreach (var objective in new[] { SelectionObjective.Coverage, SelectionObjective.Value })
    {
        foreach (var n in new[] { 1_000, 5_000, 10_000 })
        {
            var problem = Instances.Coverage(n, objective: objective);
            var watch = Stopwatch.StartNew();
            var result = Selector.Solve(problem);
            watch.Stop();
            Console.WriteLine(string.Create(inv, $"{objective,-12} {n,12} {watch.Elapsed.TotalSeconds,9:F2} {result.Objective,10:G5} {result.UpperBound,12:G5} {result.Gap * 100,6:F2} {result.Chosen.Count,7}  {result.Method}"));
        }
    }

    foreach (var (runs, replicas) in new[] { (500, 1_000), (500, 10_000) })
    {
        var (campaign, machines) = ForecastBenchmarks.Campaign(runs);
        var watch = Stopwatch.StartNew();
        var result = Campaign.Core.Forecast.CampaignForecaster.Run(campaign, machines, null, new DateTimeOffset(2027, 1, 1, 0, 0, 0, TimeSpan.Zero), new Campaign.Core.Forecast.ForecastOptions { Replicas = replicas });
        watch.Stop();
        Console.WriteLine(string.Create(inv, $"forecast {runs} runs x {replicas} replicas: {watch.Elapsed.TotalSeconds:F2} s (P(fits) {result.ProbabilityFits:F3})"));
    }

    using var process = Process.GetCurrentProcess();
    Console.WriteLine(string.Create(inv, $"peak working set: {process.PeakWorkingSet64 / 1048576.0:F0} MB"));
    return;
}

BenchmarkSwitcher.FromAssembly(typeof(SelectionBenchmarks).Assembly).Run(args);
