using Campaign.App.Forecasts;
using Campaign.App.Logs;
using Campaign.App.Models;
using Campaign.App.Plans;
using Campaign.App.Runs;
using Campaign.App.Tests.Support;
using Campaign.App.Workspaces;
using Campaign.Core.CostModel;
using Campaign.Core.Lifecycle;
using Campaign.Core.Selection;
using Campaign.Core.Tracking;
using Campaign.Store;
using Dapper;
using Xunit.Abstractions;

namespace Campaign.App.Tests;

/// <summary>
/// A year of a campaign in seconds: the services and the reconcile cycle driven against in-memory clusters on a
/// simulated clock. Plan, track part of it, rehearse, run, lose a cluster for a week, give a run up, refit, re-plan
/// with a smaller budget, forecast, run to the end of the year; the lifecycle invariants are checked after every
/// cycle against the database directly (not through the code that derives them).
/// </summary>
public sealed class SimulatedYearTests : IDisposable
{
    private static readonly TimeSpan Step = TimeSpan.FromHours(12);

    private readonly ITestOutputHelper _output;
    private readonly TempFolder _folder = new();
    private readonly SimulatedClock _clock = new(new DateTimeOffset(2027, 1, 4, 8, 0, 0, TimeSpan.Zero));
    private readonly Dictionary<string, SimulatedCluster> _clusters = new(StringComparer.Ordinal);
    private readonly Dictionary<string, double> _wallHours = new(StringComparer.Ordinal);
    private readonly RunService _runs;
    private int _cycles;

    public SimulatedYearTests(ITestOutputHelper output)
    {
        _output = output;
        TestWorkspace.Create(Ws, _clock);
        var (_, clusters) = WorkspaceAdmin.Settings(Ws);
        foreach (var profile in clusters.Values)
        {
            _clusters[profile.Name] = new SimulatedCluster(_clock, profile, HoursToFinish, TimeSpan.FromHours(3));
        }

        _runs = new RunService(_clock, BatchAccess.Given(m => _clusters[m]));
    }

    private string Ws => Path.Combine(_folder.Path, "ws");

    public void Dispose() => _folder.Dispose();

    [Fact]
    public void A_year_of_plan_rehearsal_outage_refit_and_replan_keeps_one_consistent_campaign_state()
    {
        // 1. Import the logs, fit, choose within the allocations, save the plan, and start three configurations.
        var logs = new RunLogService(_clock).Import(new ImportLogsRequest(Ws, Path.Combine(Ws, "run-logs.csv"), "run-logs.csv", false));
        var firstModel = new CostModelService(_clock).Fit(Ws, new CostFitOptions { Robust = true });
        var first = Select(budget: null);
        Assert.NotNull(first.PlanId);
        Assert.Empty(first.Carried);
        var plan = new PlanService(_clock).Current(Ws)!;
        var configs = plan.ConfigIds;
        Assert.True(configs.Count >= 6, $"plan 1 has {configs.Count} configurations");
        var started = configs.Take(3).ToHashSet(StringComparer.Ordinal);
        var real = new TrackService(_clock).Track(new TrackRequest(Ws, null, null, started, Rehearsal: false));
        Assert.Equal(plan.Runs.Count(e => started.Contains(e.ConfigId)), real.Added.Count);

        // 2. A rehearsal of two other configurations on the workstation: its runs are its own.
        var rehearsed = configs.Skip(3).Take(2).ToHashSet(StringComparer.Ordinal);
        var rehearsal = new TrackService(_clock).Track(new TrackRequest(Ws, "workbench", 1, rehearsed, Rehearsal: true));
        Assert.All(rehearsal.Added, r => Assert.EndsWith(".r1", r.RunId, StringComparison.Ordinal));
        Cycles(10);
        Assert.All(Records().Where(r => r.Rehearsal), r => Assert.Equal(RunState.Finished, r.State));
        Assert.All(Standing().Runs.Where(s => rehearsed.Contains(s.Entry.ConfigId)), s => Assert.Equal(PlanRunStatus.ToCome, s.Status));
        Assert.Equal(0, Scalar("SELECT count(*) FROM run_logs WHERE run_id GLOB '*.r[0-9]*'"));

        // A plain track after the rehearsal adds the real runs of the rehearsed configurations.
        var afterRehearsal = new TrackService(_clock).Track(new TrackRequest(Ws, null, null, rehearsed, Rehearsal: false));
        Assert.Equal(plan.Runs.Count(e => rehearsed.Contains(e.ConfigId)), afterRehearsal.Added.Count);
        Assert.Empty(afterRehearsal.AlreadyTracked);

        // 3. A few days of running.
        Cycles(4);
        Assert.True(Scalar("SELECT count(*) FROM legs WHERE phase = 'ended'") > 0);

        // 4. The cluster's batch commands break for a week: its runs stay exactly as they were, the cluster is marked.
        var cluster = plan.Runs.First().Cluster;
        var before = Records().Where(r => r.Cluster == cluster && !r.Rehearsal).ToDictionary(r => r.RunId, r => (r.State, r.Reason));
        var legsBefore = Scalar("SELECT count(*) FROM legs");
        Assert.Contains(before.Values, r => r.State is RunState.Queued or RunState.Running);
        _clusters[cluster].Down = true;
        for (var i = 0; i < 14; i++)
        {
            var report = Cycle();
            Assert.Contains(cluster, report.Unreachable!);
            Assert.Single(report.Messages, m => m.StartsWith(cluster + ": unreachable", StringComparison.Ordinal));
            Assert.Equal(before, Records().Where(r => r.Cluster == cluster && !r.Rehearsal).ToDictionary(r => r.RunId, r => (r.State, r.Reason)));
        }

        Assert.Equal(legsBefore, Scalar("SELECT count(*) FROM legs"));
        var status = new StatusService(_clock).Status(Ws, 0);
        var fault = Assert.Single(status.ClusterFaults);
        Assert.Equal(cluster, fault.Cluster);
        Assert.DoesNotContain('\n', fault.Message);
        Assert.Equal(0, Scalar("SELECT count(*) FROM tracked_runs WHERE state = 'held'"));
        _clusters[cluster].Down = false;
        Cycle();
        Assert.Empty(new StatusService(_clock).Status(Ws, 0).ClusterFaults);

        // 5. A human gives one configuration up while it runs; its jobs are cancelled and charged once.
        var givenUp = Records().First(r => !r.Rehearsal && r.State is RunState.Queued or RunState.Running).ConfigId;
        var abandoned = _runs.Abandon(new RunSelection(Ws, Array.Empty<string>(), givenUp + ".res*", null));
        Assert.NotEmpty(abandoned);
        Cycles(60);

        // 6. Refit with what the campaign has finished: its real runs are in the logs, the rehearsal's are not.
        var finishedReal = Scalar("SELECT count(*) FROM tracked_runs WHERE state = 'finished' AND rehearsal = 0");
        Assert.Equal(logs.Total + finishedReal, Scalar("SELECT count(*) FROM run_logs"));
        var refit = new CostModelService(_clock).Fit(Ws, new CostFitOptions { Robust = true });
        Assert.True(refit.Id > firstModel.Id);

        // 7. A re-plan with a smaller budget keeps every started configuration and takes spending off first.
        var standing = Standing();
        var startedNow = standing.Runs.Where(s => s.IsStarted && s.Status != PlanRunStatus.Abandoned).Select(s => s.Entry.ConfigId).ToHashSet(StringComparer.Ordinal);
        var spent = Sum("SELECT sum(charged_core_hours) FROM legs");
        var second = Select(budget: spent + 2_500_000);
        Assert.Equal(startedNow.Order(StringComparer.Ordinal), second.Carried.Select(c => c.ConfigId).Order(StringComparer.Ordinal));
        // The configuration given up needs nothing more (levels it finished before keep it in the plan as history).
        Assert.All(second.Carried.Where(c => c.ConfigId == givenUp), c => Assert.Equal(0, c.RemainingCost));
        Assert.Equal(spent + second.Carried.Sum(c => c.RemainingCost), second.Reserved.Values.Sum(), 6);
        Assert.True(second.Report.Pools.Single().Used <= 2_500_000 - second.Carried.Sum(c => c.RemainingCost) + 1e-6);
        var replanned = new PlanService(_clock).Current(Ws)!;
        Assert.All(startedNow, id => Assert.Contains(id, replanned.ConfigIds));
        CheckInvariants();

        // 8. Track the rest of the new plan; the forecast covers exactly what the plan has left.
        new TrackService(_clock).Track(new TrackRequest(Ws, null, null, null, Rehearsal: false));
        var forecast = new ForecastService(_clock).Forecast(new ForecastRequest(Ws, 20, 1));
        Assert.Equal(PlanRunsLeft(), forecast.RunsLeft);

        // 9. To the end of the allocation year.
        while (_clock.GetUtcNow() < new DateTimeOffset(2027, 12, 31, 0, 0, 0, TimeSpan.Zero))
        {
            Cycle();
        }

        var end = Standing();
        _output.WriteLine($"{_cycles} cycles; {end.Runs.Count(s => s.Status == PlanRunStatus.Finished)} plan runs finished, {PlanRunsLeft()} left; spent {Sum("SELECT sum(charged_core_hours) FROM legs"):N0} core-hours");
        Assert.True(end.Runs.Count(s => s.Status == PlanRunStatus.Finished) >= startedNow.Count);
        var final = new ForecastService(_clock).Forecast(new ForecastRequest(Ws, 20, 1));
        Assert.Equal(PlanRunsLeft(), final.RunsLeft);
    }

    private SelectResult Select(double? budget)
    {
        var result = new PlanService(_clock).Select(new SelectRequest(Ws, Path.Combine(Ws, "candidates.csv"), "candidates.csv", SelectionObjective.Coverage, budget, 0.8, Array.Empty<string>(), null, 0, 1500, 5, Save: true));
        foreach (var e in new PlanService(_clock).Current(Ws)!.Runs)
        {
            _wallHours[e.RunId] = e.Estimate.WallHours;
        }

        return result;
    }

    /// <summary>How long a run takes at its cores: its estimated wall hours (a rehearsal: 3 hours).</summary>
    private double HoursToFinish(string runId) => System.Text.RegularExpressions.Regex.IsMatch(runId, @"\.r[0-9]+\z") ? 3 : _wallHours[runId];

    private void Cycles(int count)
    {
        for (var i = 0; i < count; i++)
        {
            Cycle();
        }
    }

    private Tracking.TickReport Cycle()
    {
        _clock.Advance(Step);
        var report = _runs.Cycle(Ws);
        _cycles++;
        CheckInvariants();
        return report;
    }

    /// <summary>The lifecycle invariants, read from the database with SQL of their own.</summary>
    private void CheckInvariants()
    {
        using var db = CampaignDatabase.Open(Path.Combine(Ws, "campaign.db"), _clock);
        var planId = db.ExecuteScalar<long>("SELECT max(id) FROM plans");

        // No started run is lost: every real run that was not given up is a run of the current plan.
        var lost = db.Query<string>(
            """
            SELECT run_id FROM tracked_runs t WHERE rehearsal = 0 AND state <> 'failed'
              AND NOT EXISTS (SELECT 1 FROM plan_entries p WHERE p.plan_id = @planId AND p.kind = 'run' AND p.config_id = t.config_id AND p.level = t.level)
            """, new { planId }).ToList();
        Assert.True(lost.Count == 0, $"cycle {_cycles}: started runs missing from plan {planId}: {string.Join(", ", lost)}");

        // Every plan run is either tracked (as a real run) or still to come, and a rehearsal never stands in for one.
        var planRuns = db.ExecuteScalar<long>("SELECT count(*) FROM plan_entries WHERE plan_id = @planId AND kind = 'run'", new { planId });
        var tracked = db.ExecuteScalar<long>("SELECT count(*) FROM plan_entries p JOIN tracked_runs t ON t.config_id = p.config_id AND t.level = p.level AND t.rehearsal = 0 WHERE p.plan_id = @planId AND p.kind = 'run'", new { planId });
        var standing = Standing();
        Assert.Equal(planRuns, standing.Runs.Count);
        Assert.Equal(planRuns - tracked, standing.Runs.Count(s => s.Status == PlanRunStatus.ToCome));
        Assert.All(standing.Runs.Where(s => s.Run is not null), s => Assert.False(s.Run!.Rehearsal));

        // Spending is never counted twice: what the tracker charged is what the clusters ran, job by job.
        var charged = db.ExecuteScalar<double?>("SELECT sum(charged_core_hours) FROM legs") ?? 0;
        var ran = _clusters.Values.Sum(m => m.ChargedByTheSite);
        Assert.True(Math.Abs(charged - ran) <= 1e-6 * Math.Max(1, ran), $"cycle {_cycles}: charged {charged} but the clusters ran {ran}");
        Assert.Equal(db.ExecuteScalar<long>("SELECT count(*) FROM legs WHERE job_id IS NOT NULL"), db.ExecuteScalar<long>("SELECT count(DISTINCT job_id) FROM legs WHERE job_id IS NOT NULL"));
        var names = _clusters.Values.SelectMany(m => m.SubmittedNames).ToList();
        Assert.Equal(names.Count, names.Distinct().Count());

        // The run logs hold every finished real run once and no rehearsal.
        Assert.Equal(0, db.ExecuteScalar<long>("SELECT count(*) FROM run_logs r JOIN tracked_runs t ON t.run_id = r.run_id WHERE t.rehearsal = 1"));
        Assert.Equal(
            db.ExecuteScalar<long>("SELECT count(*) FROM tracked_runs WHERE state = 'finished' AND rehearsal = 0"),
            db.ExecuteScalar<long>("SELECT count(*) FROM run_logs WHERE source = 'campaign tracking'"));
    }

    private long PlanRunsLeft()
    {
        using var db = CampaignDatabase.Open(Path.Combine(Ws, "campaign.db"), _clock);
        return db.ExecuteScalar<long>(
            """
            SELECT count(*) FROM plan_entries p WHERE p.plan_id = (SELECT max(id) FROM plans) AND p.kind = 'run'
              AND NOT EXISTS (SELECT 1 FROM tracked_runs t WHERE t.config_id = p.config_id AND t.level = p.level AND t.rehearsal = 0 AND t.state IN ('finished', 'failed'))
            """);
    }

    private IReadOnlyList<RunRecord> Records()
    {
        using var db = CampaignDatabase.Open(Path.Combine(Ws, "campaign.db"), _clock);
        return TrackingStore.Records(db);
    }

    private CampaignStanding Standing()
    {
        using var db = CampaignDatabase.Open(Path.Combine(Ws, "campaign.db"), _clock);
        return CampaignStanding.Of(PlanStore.Current(db), TrackingStore.Records(db));
    }

    private long Scalar(string sql)
    {
        using var db = CampaignDatabase.Open(Path.Combine(Ws, "campaign.db"), _clock);
        return db.ExecuteScalar<long>(sql);
    }

    private double Sum(string sql)
    {
        using var db = CampaignDatabase.Open(Path.Combine(Ws, "campaign.db"), _clock);
        return db.ExecuteScalar<double?>(sql) ?? 0;
    }
}
