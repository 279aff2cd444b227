using Campaign.Core.Tracking;

namespace Campaign.Core.Tests.Tracking;

public class TrackingRulesTests
{
    private static readonly TrackingSettings Settings = new() { RetryLimit = 2, FailuresWithoutProgress = 2 };

    private static LegEnd End(string ending, double before, double after, int withProgress = 0, int without = 0, bool done = false) =>
        new(ending, before, after, 5000, done, withProgress, without);

    [Theory]
    [InlineData("succeeded")]
    [InlineData("out_of_time")]
    [InlineData("crashed")]
    public void Reaching_the_target_or_the_done_marker_finishes_whatever_the_ending(string ending)
    {
        Assert.Equal(NextStep.Finish, LegDecision.Decide(End(ending, 4000, 5000), Settings).Step);
        Assert.Equal(NextStep.Finish, LegDecision.Decide(End(ending, 100, 200, done: true), Settings).Step);
    }

    [Theory]
    [InlineData("out_of_time")]
    [InlineData("interrupted")]
    [InlineData("succeeded")]
    [InlineData("stopped_for_stall")]
    public void Interruptions_continue_and_reset_the_failure_count(string ending)
    {
        var (step, _, withProgress, without) = LegDecision.Decide(End(ending, 1000, 2000, withProgress: 2, without: 1), Settings);
        Assert.Equal(NextStep.Continue, step);
        Assert.Equal(0, withProgress);
        Assert.Equal(0, without);
    }

    [Fact]
    public void Failures_after_progress_retry_up_to_the_limit_then_hold()
    {
        Assert.Equal((NextStep.Continue, 1), Pick(LegDecision.Decide(End("crashed", 1000, 1500), Settings)));
        Assert.Equal((NextStep.Continue, 2), Pick(LegDecision.Decide(End("crashed", 1000, 1500, withProgress: 1), Settings)));
        var (step, why, _, _) = LegDecision.Decide(End("out_of_memory", 1000, 1500, withProgress: 2), Settings);
        Assert.Equal(NextStep.Hold, step);
        Assert.Equal("leg out of memory 3 times in a row (retry limit 2)", why);

        static (NextStep, int) Pick((NextStep Step, string Why, int WithProgress, int Without) d) => (d.Step, d.WithProgress);
    }

    [Fact]
    public void Repeated_failures_without_progress_hold_the_run()
    {
        Assert.Equal(NextStep.Continue, LegDecision.Decide(End("crashed", 1000, 1000), Settings).Step);
        var (step, why, _, without) = LegDecision.Decide(End("launch_failed", 1000, 1000, without: 1), Settings);
        Assert.Equal(NextStep.Hold, step);
        Assert.Equal(2, without);
        Assert.Equal("leg launch failed without progress 2 times in a row (t = 1000 M)", why);
        // A clean exit that made no progress counts as a failure without progress.
        Assert.Equal(NextStep.Hold, LegDecision.Decide(End("succeeded", 1000, 1000, without: 1), Settings).Step);
    }

    [Fact]
    public void A_steadily_growing_norm_is_going_bad_and_noise_is_not()
    {
        // ln(norm) = ln(1e-6) + 0.02 t: the fitted rate is exactly 0.02 per M with R^2 = 1.
        var growing = Enumerable.Range(0, 30).Select(i => new ProgressPoint(i * 10, 1e-6 * Math.Exp(0.02 * i * 10))).ToList();
        Assert.True(Health.IsGoingBad(growing, 20, 0.005, out var rate));
        Assert.Equal(0.02, rate, 12);
        var random = new Random(3);
        var noisy = Enumerable.Range(0, 30).Select(i => new ProgressPoint(i * 10, 1e-6 * (1 + 0.5 * random.NextDouble()))).ToList();
        Assert.False(Health.IsGoingBad(noisy, 20, 0.005, out _));
        Assert.Null(Health.NormGrowthRate(growing.Take(2).ToList(), 20));
    }

    [Fact]
    public void The_newest_valid_checkpoint_is_chosen_and_broken_newer_ones_are_named()
    {
        var now = new DateTimeOffset(2027, 1, 1, 12, 0, 0, TimeSpan.Zero);
        var files = new[]
        {
            new CheckpointFile("/r/ckpt-1.json", 100, now.AddHours(-3), true, null),
            new CheckpointFile("/r/ckpt-2.json", 100, now.AddHours(-2), true, false),
            new CheckpointFile("/r/ckpt-3.json", 100, now.AddHours(-1), false, null),
            new CheckpointFile("/r/ckpt-4.json", 0, now.AddMinutes(-1), true, null),
        };
        var (newest, skipped) = Checkpoints.NewestValid(files, markerRule: true, TimeSpan.FromMinutes(2), now);
        Assert.Equal("/r/ckpt-1.json", newest!.Path);
        Assert.Equal(new[] { "empty", "no completion marker (half-written?)", "checksum does not match (corrupt)" }, skipped.Select(s => s.Why));
        var settled = Checkpoints.NewestValid(new[] { files[0] with { HasMarker = false, Modified = now.AddSeconds(-30) } }, markerRule: false, TimeSpan.FromMinutes(2), now);
        Assert.Null(settled.Newest);
        Assert.Equal("still changing (not settled)", settled.Skipped[0].Why);
    }

    [Fact]
    public void Progress_columns_skip_comments_and_keep_non_finite_norms()
    {
        var points = ProgressSeries.FromColumns("# t norm\n10 1e-6\n20 2e-6\n30 NaN\n4");
        Assert.Equal(new[] { new ProgressPoint(10, 1e-6), new ProgressPoint(20, 2e-6), new ProgressPoint(30, double.NaN), new ProgressPoint(4, null) }, points);
        var fromLog = ProgressSeries.FromLog("step 1 t=12.5 |C|=3e-7\nnoise\nstep 2 t=25 |C|=4e-7\n", @"t=(?<t>[0-9.]+) \|C\|=(?<norm>[0-9.e-]+)");
        Assert.Equal(new[] { new ProgressPoint(12.5, 3e-7), new ProgressPoint(25, 4e-7) }, fromLog);
    }

    [Fact]
    public void The_budget_guard_counts_used_committed_and_the_reserve()
    {
        Assert.True(BudgetGuard.Allows(100, used: 500, committed: 300, allocation: 1000, reserve: 100, out var left));
        Assert.Equal(100, left);
        Assert.False(BudgetGuard.Allows(100.01, 500, 300, 1000, 100, out _));
    }

    [Fact]
    public void A_leg_ended_by_the_warning_before_any_progress_is_too_short_not_a_failure_until_it_keeps_happening()
    {
        var settings = new TrackingSettings();
        var end = new LegEnd("too_short", 300, 300, 5000, false, 0, 1, 0);
        var (step, why, withProgress, without) = LegDecision.Decide(end, settings);
        Assert.Equal(NextStep.Continue, step);
        Assert.Equal((0, 1), (withProgress, without)); // the failure counters are untouched
        Assert.StartsWith("leg too short", why, StringComparison.Ordinal);
        var fifth = LegDecision.Decide(end with { ShortLegs = LegDecision.ShortLegLimit - 1 }, settings);
        Assert.Equal(NextStep.Hold, fifth.Step);
        Assert.Contains("raise leg_minutes", fifth.Why, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData(138, null, true)] // the shell's 128 + 10 for SIGUSR1 (signal(7): USR1 is 10 on Linux x86-64 and arm64)
    [InlineData(0, 10, true)]
    [InlineData(0, 0, false)]
    [InlineData(143, null, false)] // 128 + 15: SIGTERM, not the warning
    public void A_job_ended_by_the_warning_signal_is_recognised_from_its_exit_or_its_signal(int exit, int? signal, bool expected)
    {
        Assert.Equal(expected, Signals.EndedBy(Signals.Number("USR1")!.Value, exit, signal));
    }

    [Fact]
    public void A_non_finite_norm_as_C_or_Fortran_prints_it_is_kept_and_holds_the_run_even_at_its_done_marker()
    {
        var points = ProgressSeries.FromColumns("10 1e-6\n50 nan\n60 -NaN\n70 inf\n80 Infinity\n90 1e-6\n");
        Assert.Equal(6, points.Count);
        Assert.True(double.IsNaN(points[1].Norm!.Value));
        Assert.True(double.IsNaN(points[2].Norm!.Value));
        Assert.Equal(double.PositiveInfinity, points[3].Norm);
        Assert.Equal(50, Health.FirstNonFinite(points)!.Value.Time);
        Assert.Null(Health.FirstNonFinite(ProgressSeries.FromColumns("10 1e-6\n20\n")));

        var end = new LegEnd("succeeded", 0, 400, 5000, DoneMarker: true, 0, 0, 0, Health.NonFiniteReason(points[1]));
        var (step, why, _, _) = LegDecision.Decide(end, new TrackingSettings());
        Assert.Equal(NextStep.Hold, step);
        Assert.Equal("constraint norm not finite (nan at t = 50 M): the run has gone bad", why);
    }

    [Fact]
    public void Legs_that_run_into_their_wall_time_without_progress_count_as_failures_without_progress()
    {
        // Regression (faults issue, item 10): a code that ignores the warning and never advances was resubmitted for ever.
        var settings = new TrackingSettings();
        var first = LegDecision.Decide(new LegEnd("out_of_time", 300, 300, 5000, false, 0, 0), settings);
        Assert.Equal((NextStep.Continue, 1), (first.Step, first.FailuresWithoutProgress));
        var second = LegDecision.Decide(new LegEnd("out_of_time", 300, 300, 5000, false, 0, first.FailuresWithoutProgress), settings);
        Assert.Equal(NextStep.Hold, second.Step);
        Assert.StartsWith("leg ran out of time without progress 2 times in a row", second.Why, StringComparison.Ordinal);

        // With progress a timeout is the normal end of a leg; a node failure is the cluster's, not the run's.
        Assert.Equal((NextStep.Continue, 0), Pick(LegDecision.Decide(new LegEnd("out_of_time", 300, 900, 5000, false, 0, 1), settings)));
        Assert.Equal((NextStep.Continue, 1), Pick(LegDecision.Decide(new LegEnd("interrupted", 300, 300, 5000, false, 0, 1), settings)));

        static (NextStep, int) Pick((NextStep Step, string Why, int WithProgress, int Without) d) => (d.Step, d.Without);
    }
}
