using System.Diagnostics;
using System.Globalization;
using Campaign.Core.CostModel;
using Campaign.Core.Domain;
using Campaign.Core.Forecast;
using Campaign.Core.Physics;
using Campaign.Core.Selection;

namespace Campaign.Bench;

/// <summary>
/// `dotnet run -c Release --project bench/Campaign.Bench -- quick`: one timed run per case and size (best of a few
/// for the short ones), the scaling exponent of each family (slope of ln time against ln size, least squares), and
/// the selection-quality comparison against the exact solver. The figures in docs/performance.md come from here.
/// </summary>
public static class Quick
{
    private static readonly CultureInfo Inv = CultureInfo.InvariantCulture;

    private static double Time(Action action, int repeats = 1)
    {
        var best = double.PositiveInfinity;
        for (var r = 0; r < repeats; r++)
        {
            var watch = Stopwatch.StartNew();
            action();
            best = Math.Min(best, watch.Elapsed.TotalSeconds);
        }

        return best;
    }

    private static void Exponent(string family, IReadOnlyList<(double Size, double Seconds)> points)
    {
        var xs = points.Select(p => Math.Log(p.Size)).ToArray();
        var ys = points.Select(p => Math.Log(Math.Max(p.Seconds, 1e-6))).ToArray();
        var (intercept, slope) = MathNet.Numerics.Fit.Line(xs, ys);
        _ = intercept;
        Console.WriteLine(string.Create(Inv, $"  scaling exponent of {family}: time ~ n^{slope:F2}"));
    }

    /// <summary>Synthetic run logs (invented): features drawn at random, cost from a known law with log-normal scatter.</summary>
    public static (List<CostObservation> Data, List<double> CoreHours) Logs(int n, int seed = 5)
    {
        var random = new Random(seed);
        var data = new List<CostObservation>(n);
        var cost = new List<double>(n);
        for (var i = 0; i < n; i++)
        {
            var lnT = Math.Log(3000 + 9000 * random.NextDouble());
            var lnQ = Math.Log(1 + 7 * random.NextDouble());
            var spin = -Math.Log(1 - 0.9 * random.NextDouble());
            var level = 1 + random.Next(3);
            var lnCores = Math.Log(128 * (1 + random.Next(4)));
            var cluster = random.NextDouble() < 0.6 ? "a" : "b";
            var lnSpeed = cluster == "a" ? 0 : Math.Log(0.7);
            data.Add(new CostObservation("r" + i, lnT, lnQ, spin, level, lnCores, cluster, lnSpeed));
            var noise = Math.Sqrt(-2 * Math.Log(1 - random.NextDouble())) * Math.Cos(2 * Math.PI * random.NextDouble());
            cost.Add(Math.Exp(-5.9 + 1.0 * lnT + 0.8 * lnQ + 0.35 * spin + 0.64 * level + 0.12 * (lnCores - Math.Log(128)) - lnSpeed + 0.2 * noise));
        }

        return (data, cost);
    }

    public static void Run(IReadOnlyCollection<string> only)
    {
        bool Wanted(string section) => only.Count == 0 || only.Contains(section);
        FittedCostModel model = CostModelFitter.Fit(Logs(1_000).Data, Logs(1_000).CoreHours, new CostFitOptions { Robust = true });
        var clusters = new Dictionary<string, ClusterProfile>
        {
            ["a"] = new("a", "", BatchSystemKind.Slurm, 128, 512, 48, true, 1, 1, 100, 50, 3, 20),
            ["b"] = new("b", "", BatchSystemKind.Pbs, 48, 192, 24, false, 0.8, 0.7, 100, 50, 3, 20),
        };

        if (only.Contains("probe"))
        {
            var random = new Random(9);
            var configs = Enumerable.Range(0, 100_000).Select(i => new BinaryConfiguration(MassRatio.From(1 + 7 * random.NextDouble()), Spin.From(0, 0, 0.9 * random.NextDouble()), Spin.From(0, 0, 0), 0.015 + 0.004 * random.NextDouble())).ToList();
            var lengths = new double[configs.Count];
            Console.WriteLine(string.Create(Inv, $"probe: 100k lengths {Time(() => { for (var i = 0; i < configs.Count; i++) { lengths[i] = SimulatedLength.Estimate(configs[i], new LengthSettings()).Total; } }):F3} s"));
            Console.WriteLine(string.Create(Inv, $"probe: 100k lengths in parallel {Time(() => Parallel.For(0, configs.Count, i => lengths[i] = SimulatedLength.Estimate(configs[i], new LengthSettings()).Total)):F3} s on {Environment.ProcessorCount} processors"));
            Console.WriteLine(string.Create(Inv, $"probe: 100k predictions {Time(() => { for (var i = 0; i < configs.Count; i++) { model.Predict(CostObservation.For("c", configs[i], 1, 256, clusters["a"], lengths[i]), 0.9); } }):F3} s"));
            var probeCandidates = configs.Select((c, i) => new Candidate("c" + i, new RunSpec("c" + i, c, new[] { 1 }, 256), "a", 1, false, null)).ToList();
            Console.WriteLine(string.Create(Inv, $"probe: 100k estimate with 100 samples {Time(() => ProposalEstimator.Estimate(probeCandidates, clusters, model, StorageModel.RuleOfThumb, new LengthSettings(), new EstimateOptions { Samples = 100 })):F3} s"));
            Console.WriteLine(string.Create(Inv, $"probe: 100k feature rows {Time(() => { for (var i = 0; i < configs.Count; i++) { model.Features.Row(CostObservation.For("c", configs[i], 1, 256, clusters["a"], lengths[i])); } }):F3} s"));
        }

        if (Wanted("fit"))
        {
            Console.WriteLine("== Fit (robust, 5-fold cross-validation over four feature sets)");
            var fits = new List<(double, double)>();
            foreach (var n in new[] { 100, 1_000, 10_000 })
            {
                var (data, cost) = Logs(n);
                var seconds = Time(() => model = CostModelFitter.Fit(data, cost, new CostFitOptions { Robust = true }), n < 10_000 ? 3 : 1);
                fits.Add((n, seconds));
                Console.WriteLine(string.Create(Inv, $"  {n,7} logs: {seconds,8:F3} s"));
            }

            Exponent("fit", fits);
        }

        if (Wanted("estimate"))
        {
            Console.WriteLine("== Estimate (proposal rows, Monte Carlo totals with 4000 draws)");
            var estimates = new List<(double, double)>();
            foreach (var n in new[] { 1_000, 10_000, 100_000 })
            {
                var random = new Random(9);
                var candidates = Enumerable.Range(0, n).Select(i => new Candidate("c" + i, new RunSpec("c" + i,
                    new BinaryConfiguration(MassRatio.From(1 + 7 * random.NextDouble()), Spin.From(0, 0, 0.9 * random.NextDouble()), Spin.From(0, 0, 0), 0.015 + 0.004 * random.NextDouble()),
                    new[] { 1 }, 256), "a", 1, false, null)).ToList();
                var seconds = Time(() => ProposalEstimator.Estimate(candidates, clusters, model, StorageModel.RuleOfThumb, new LengthSettings(), new EstimateOptions()));
                estimates.Add((n, seconds));
                Console.WriteLine(string.Create(Inv, $"  {n,7} rows: {seconds,8:F3} s"));
            }

            Exponent("estimate", estimates);
        }

        if (Wanted("select"))
        {
            Console.WriteLine("== Select, coverage (full method: lazy greedy, enumeration where affordable, swaps, bound)");
            var selects = new List<(double, double)>();
            foreach (var n in new[] { 1_000, 5_000, 10_000, 20_000 })
            {
                var problem = Instances.Coverage(n);
                SelectionResult? result = null;
                GC.Collect();
                var before = GC.GetTotalMemory(true);
                using var process = Process.GetCurrentProcess();
                var seconds = Time(() => result = Selector.Solve(problem));
                process.Refresh();
                selects.Add((n, seconds));
                Console.WriteLine(string.Create(Inv, $"  {n,7} candidates: {seconds,8:F2} s, objective {result!.Objective:F4}, bound {result.UpperBound:F4}, gap {result.Gap * 100:F1}%, peak working set so far {process.PeakWorkingSet64 / 1048576.0:F0} MB"));
            }

            Exponent("select (coverage)", selects);
        }

        if (Wanted("greedy"))
        {
            Console.WriteLine("== Greedy phase: lazy against plain (same picks required)");
            var lazyTimes = new List<(double, double)>();
            var plainTimes = new List<(double, double)>();
            foreach (var n in new[] { 500, 1_000, 2_000 })
            {
                var problem = Instances.Coverage(n);
                (List<Assignment> Chosen, double Value) lazy = (new List<Assignment>(), 0), plain = (new List<Assignment>(), 0);
                var lazySeconds = Time(() => lazy = Selector.GreedyPhase(problem, lazy: true));
                var plainSeconds = Time(() => plain = Selector.GreedyPhase(problem, lazy: false));
                lazyTimes.Add((n, lazySeconds));
                plainTimes.Add((n, plainSeconds));
                var same = lazy.Chosen.Select(a => a.Candidate).SequenceEqual(plain.Chosen.Select(a => a.Candidate));
                Console.WriteLine(string.Create(Inv, $"  {n,7} candidates: lazy {lazySeconds,7:F2} s, plain {plainSeconds,7:F2} s, speed-up x{plainSeconds / lazySeconds:F1}, same picks: {same} ({lazy.Chosen.Count} chosen, value {lazy.Value:F6} vs {plain.Value:F6})"));
                if (!same)
                {
                    throw new InvalidOperationException("lazy and plain greedy disagree");
                }
            }

            Exponent("lazy greedy", lazyTimes);
            Exponent("plain greedy", plainTimes);
        }

        if (Wanted("knapsack"))
        {
            Console.WriteLine("== Select, value (exact knapsack)");
            var knapsacks = new List<(double, double)>();
            foreach (var n in new[] { 1_000, 10_000 })
            {
                var problem = Instances.Coverage(n, objective: SelectionObjective.Value);
                SelectionResult? result = null;
                var seconds = Time(() => result = Selector.Solve(problem), 3);
                knapsacks.Add((n, seconds));
                Console.WriteLine(string.Create(Inv, $"  {n,7} items: {seconds,8:F3} s, {result!.Method}, gap {result.Gap * 100:F2}%"));
            }

            Exponent("knapsack", knapsacks);
        }

        if (Wanted("exact"))
        {
            Console.WriteLine("== Selection quality against the exact solver (OR-Tools, SCIP, mixed-integer program; 60 s limit)");
            foreach (var (n, seed) in new[] { (20, 1), (40, 2), (60, 3), (100, 4), (150, 5) })
            {
                var problem = Instances.Coverage(n, budgetFraction: 0.2, seed: seed);
                SelectionResult? ours = null;
                var ourSeconds = Time(() => ours = Selector.Solve(problem));
                (double Objective, bool Optimal) exact = default;
                var exactSeconds = Time(() => exact = ExactCoverage.Solve(problem, TimeSpan.FromSeconds(60)));
                Console.WriteLine(string.Create(Inv, $"  {n,4} candidates: ours {ours!.Objective:F5} in {ourSeconds:F3} s; exact {exact.Objective:F5} in {exactSeconds:F2} s ({(exact.Optimal ? "optimal" : "time limit: best found")}); ratio {ours.Objective / exact.Objective:F4}; exact/ours time x{exactSeconds / ourSeconds:F0}; our bound {ours.UpperBound:F5}"));
            }
        }

        if (Wanted("tick"))
        {
            Console.WriteLine("== Reconcile cycle (in-process batch backend, real SQLite workspace)");
            var ticks = new List<(double, double)>();
            foreach (var n in new[] { 1_000, 10_000 })
            {
                var (first, started, steady, turnover, queries) = TickBench.Measure(n);
                ticks.Add((n, steady));
                Console.WriteLine(string.Create(Inv, $"  {n,7} runs: first cycle (submits all) {first:F2} s, cycle seeing all start {started:F2} s, steady cycle {steady:F2} s, cycle with 10% of legs ended {turnover:F2} s; batch queries per cycle {queries}"));
            }

            Exponent("steady cycle", ticks);
        }

        if (Wanted("ssh-tick"))
        {
            Console.WriteLine("== Reconcile cycle over SSH (run folders on two sites through real ssh, batch calls counted)");
            SshTickBench.Run(2_000);
        }

        if (Wanted("forecast"))
        {
            Console.WriteLine("== Forecast");
            var forecasts = new List<(double, double)>();
            foreach (var (runs, replicas) in new[] { (500, 1_000), (500, 10_000) })
            {
                var (campaign, forecastClusters) = ForecastBenchmarks.Campaign(runs);
                ForecastResult? result = null;
                var seconds = Time(() => result = CampaignForecaster.Run(campaign, forecastClusters, null, new DateTimeOffset(2027, 1, 1, 0, 0, 0, TimeSpan.Zero), new ForecastOptions { Replicas = replicas }));
                forecasts.Add((replicas, seconds));
                Console.WriteLine(string.Create(Inv, $"  {runs} runs x {replicas,6} replicas: {seconds:F2} s (P(fits) {result!.ProbabilityFits:F3})"));
            }

            Exponent("forecast (in replicas)", forecasts);
        }

        using var self = Process.GetCurrentProcess();
        Console.WriteLine(string.Create(Inv, $"peak working set of the whole run: {self.PeakWorkingSet64 / 1048576.0:F0} MB"));
    }
}
