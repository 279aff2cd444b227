using Campaign.Core.Domain;
using Campaign.Core.Forecast;

namespace Campaign.Core.Tests.Forecast;

public class CampaignForecasterTests
{
    private static readonly DateTimeOffset Start = new(2027, 1, 1, 0, 0, 0, TimeSpan.Zero);

    private static ClusterProfile Cluster(double waitMedian = 0, double waitP90 = 0, int running = 10, int queued = 10, double wall = 24) =>
        new("m", "", BatchSystemKind.Slurm, 64, 256, wall, false, 1.0, 1.0, queued, running, waitMedian, waitP90);

    private static ForecastRun Run(string id, double coreHours, int cores = 1, double done = 0) => new(id, "m", cores, null, 0, coreHours, done, false);

    private static ForecastResult Forecast(IReadOnlyList<ForecastRun> runs, ClusterProfile cluster, Allocation? allocation = null, double failure = 0, int replicas = 200, double already = 0) =>
        CampaignForecaster.Run(runs, new Dictionary<string, ForecastCluster> { ["m"] = new(cluster, allocation, already) }, null, Start,
            new ForecastOptions { Replicas = replicas, LegFailureProbability = failure, Seed = 7 });

    [Fact]
    public void Without_waits_or_failures_a_run_ends_after_exactly_its_wall_time_in_whole_legs()
    {
        // 100 core-hours on 1 core = 100 h; legs of 24 - 0.5 = 23.5 h: four full ones and one of 6 h.
        var result = Forecast(new[] { Run("a", 100) }, Cluster());
        Assert.Equal(Start.AddHours(100), result.Finish.P10);
        Assert.Equal(Start.AddHours(100), result.Finish.P90);
        Assert.Equal(5, result.Runs[0].MeanLegs, 12);
        Assert.Equal(1, result.ProbabilityFits);
    }

    [Fact]
    public void A_run_half_done_needs_half_the_time()
    {
        var result = Forecast(new[] { Run("a", 40, done: 0.5) }, Cluster());
        Assert.Equal(Start.AddHours(20), result.Finish.P50);
    }

    [Fact]
    public void The_running_job_limit_serialises_runs()
    {
        var runs = new[] { Run("a", 10), Run("b", 10), Run("c", 10) };
        Assert.Equal(Start.AddHours(30), Forecast(runs, Cluster(running: 1)).Finish.P50);
        Assert.Equal(Start.AddHours(10), Forecast(runs, Cluster(running: 3)).Finish.P50);
    }

    [Fact]
    public void Queue_waits_follow_the_log_normal_with_the_profiles_median_and_90th_percentile()
    {
        // One single-leg run of 1 h after a log-normal wait with median 2 h and P90 8 h: the finish
        // percentiles are 3 h and 9 h (log-normal quantiles: median exp(mu), P90 exp(mu + 1.2816 sigma)).
        var result = Forecast(new[] { Run("a", 1) }, Cluster(waitMedian: 2, waitP90: 8), replicas: 20000);
        Assert.Equal(3, (result.Finish.P50!.Value - Start).TotalHours, 0.15);
        Assert.Equal(9, (result.Finish.P90!.Value - Start).TotalHours, 0.5);
    }

    [Fact]
    public void Failed_legs_are_repeated_as_often_as_a_geometric_law_says()
    {
        // Four full legs needed, each failing with p = 0.2: the expected number of legs is 4/(1 - p) = 5
        // (mean of a negative binomial count of trials).
        var result = Forecast(new[] { Run("a", 94) }, Cluster(), failure: 0.2, replicas: 20000);
        Assert.Equal(5, result.Runs[0].MeanLegs, 0.05);
    }

    [Fact]
    public void A_plan_larger_than_the_allocation_does_not_fit_and_its_runs_are_late()
    {
        var allocation = new Allocation("m", 50, AllocationUnit.CoreHours, new DateOnly(2027, 1, 1), new DateOnly(2027, 12, 31), Array.Empty<AllocationWindow>());
        var result = Forecast(new[] { Run("a", 100) }, Cluster(), allocation);
        Assert.Equal(0, result.ProbabilityFits);
        Assert.Equal(1, result.Runs[0].ProbabilityLate);
        Assert.Null(result.Finish.P50);
        var window = Assert.Single(result.Windows);
        Assert.True(window.MeanCharge <= 50);
    }

    [Fact]
    public void A_windows_share_caps_what_starts_in_it_and_the_rest_waits_for_the_next_window()
    {
        var windows = new[]
        {
            new AllocationWindow(new DateOnly(2027, 1, 1), new DateOnly(2027, 1, 2), 30),
            new AllocationWindow(new DateOnly(2027, 1, 3), new DateOnly(2027, 12, 31), 1000),
        };
        var allocation = new Allocation("m", 1030, AllocationUnit.CoreHours, new DateOnly(2027, 1, 1), new DateOnly(2027, 12, 31), windows);
        // 100 h on 1 core, legs of 23.5 h charged at worst 24 h. The first window (30 core-hours) takes the
        // first leg (0-23.5 h); a second would risk 23.5 + 24 > 30, so it waits for the second window (Jan 3,
        // hour 48), where the remaining 76.5 h run through: finish at 124.5 h. Charges land where legs end.
        var result = Forecast(new[] { Run("a", 100) }, Cluster(), allocation);
        Assert.Equal(Start.AddHours(124.5), result.Finish.P50);
        Assert.Equal(23.5, result.Windows[0].MeanCharge, 9);
        Assert.Equal(0, result.Windows[0].ProbabilityOver);
        Assert.Equal(76.5, result.Windows[1].MeanCharge, 9);
        Assert.Equal(1, result.Windows[1].ProbabilityUnused);
        Assert.Equal(1, result.ProbabilityFits);
    }

    [Fact]
    public void Running_legs_count_at_their_worst_case_against_a_window()
    {
        // Two runs of one leg each (10 h, worst case 24 h on 1 core) and a 40 core-hour window: the second may
        // start only after the first has ended and been charged its 10 h (10 + 24 <= 40), as the tracker's guard.
        var windows = new[]
        {
            new AllocationWindow(new DateOnly(2027, 1, 1), new DateOnly(2027, 6, 30), 40),
            new AllocationWindow(new DateOnly(2027, 7, 1), new DateOnly(2027, 12, 31), 40),
        };
        var allocation = new Allocation("m", 80, AllocationUnit.CoreHours, new DateOnly(2027, 1, 1), new DateOnly(2027, 12, 31), windows);
        var result = Forecast(new[] { Run("a", 10), Run("b", 10) }, Cluster(running: 2), allocation);
        Assert.Equal(20, (result.Finish.P50!.Value - Start).TotalHours, 6); // waits for the end to within a few microseconds
        Assert.Equal(20, result.Windows[0].MeanCharge, 9);
    }

    [Fact]
    public void Nothing_runs_before_the_allocation_starts()
    {
        var allocation = new Allocation("m", 1000, AllocationUnit.CoreHours, new DateOnly(2027, 2, 1), new DateOnly(2027, 12, 31), Array.Empty<AllocationWindow>());
        var result = Forecast(new[] { Run("a", 10) }, Cluster(), allocation);
        Assert.Equal(new DateTimeOffset(2027, 2, 1, 10, 0, 0, TimeSpan.Zero), result.Finish.P50);
    }

    private sealed class Recorder : IProgress<double>
    {
        public List<double> Values { get; } = new();

        public void Report(double value)
        {
            lock (Values)
            {
                Values.Add(value);
            }
        }
    }

    [Fact]
    public void Progress_is_reported_up_to_completion_and_does_not_change_the_result()
    {
        var runs = new[] { Run("a", 50), Run("b", 70) };
        var recorder = new Recorder();
        var clusters = new Dictionary<string, ForecastCluster> { ["m"] = new(Cluster(2, 8), null, 0) };
        var options = new ForecastOptions { Replicas = 500, Seed = 3 };
        var with = CampaignForecaster.Run(runs, clusters, null, Start, options, recorder);
        var without = CampaignForecaster.Run(runs, clusters, null, Start, options);
        Assert.Equal(1.0, recorder.Values.Max());
        Assert.Equal(without.Finish, with.Finish);
    }

    [Fact]
    public void Measured_waits_replace_the_profile_once_there_are_enough()
    {
        var profile = Cluster(waitMedian: 2, waitP90: 8);
        Assert.Equal((2.0, 8.0, "the profile"), new ForecastCluster(profile, null, 0, new double[] { 1, 1, 1, 1 }).QueueWait());
        var measured = new ForecastCluster(profile, null, 0, new double[] { 0.5, 1, 1.5, 2, 2.5, 3, 3.5, 4, 4.5, 10 }).QueueWait();
        Assert.Equal((3.0, 10.0, "10 measured waits"), measured);
        // With measured waits of exactly 0 the runs start at once: the finish is the wall time alone.
        var instant = CampaignForecaster.Run(new[] { Run("a", 10) }, new Dictionary<string, ForecastCluster> { ["m"] = new(profile, null, 0, new double[] { 0, 0, 0, 0, 0 }) }, null, Start, new ForecastOptions { Replicas = 50 });
        Assert.Equal(Start.AddHours(10), instant.Finish.P90);
    }
}
