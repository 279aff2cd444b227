using Campaign.App.Logs;
using Campaign.App.Models;
using Campaign.App.Plans;
using Campaign.App.Runs;
using Campaign.App.Tests.Support;
using Campaign.Batch;
using Campaign.Core.CostModel;
using Campaign.Core.Domain;
using Campaign.Core.Lifecycle;
using Campaign.Core.Selection;
using Campaign.Core.Tracking;
using Campaign.Store;
using Campaign.Tracking.Cycle;

namespace Campaign.App.Tests;

/// <summary>The steps of the reconcile cycle, each on its own, against an in-memory cluster on a simulated clock.</summary>
public sealed class CycleStepTests : IDisposable
{
    private readonly TempFolder _folder = new();
    private readonly SimulatedClock _clock = new(new DateTimeOffset(2027, 2, 1, 8, 0, 0, TimeSpan.Zero));
    private readonly Dictionary<string, SimulatedCluster> _clusters = new(StringComparer.Ordinal);

    public CycleStepTests()
    {
        TestWorkspace.Create(Ws, _clock);
        new RunLogService(_clock).Import(new ImportLogsRequest(Ws, Path.Combine(Ws, "run-logs.csv"), "run-logs.csv", false));
        new CostModelService(_clock).Fit(Ws, new CostFitOptions());
        new PlanService(_clock).Select(new SelectRequest(Ws, Path.Combine(Ws, "candidates.csv"), "candidates.csv", SelectionObjective.Coverage, null, 0.5, Array.Empty<string>(), null, 0, 1500, 5, Save: true));
        var plan = new PlanService(_clock).Current(Ws)!;
        new TrackService(_clock).Track(new TrackRequest(Ws, null, null, plan.ConfigIds.Where(id => plan.Runs.First(e => e.ConfigId == id).Cluster == Cluster).Take(2).ToList(), false));
        foreach (var profile in Workspaces.WorkspaceAdmin.Settings(Ws).Clusters.Values)
        {
            _clusters[profile.Name] = new SimulatedCluster(_clock, profile, _ => 100, TimeSpan.FromHours(1));
        }
    }

    private const string Cluster = "halyard";

    private string Ws => Path.Combine(_folder.Path, "ws");

    public void Dispose() => _folder.Dispose();

    private CycleContext Context(Workspace workspace) => new(workspace, _clusters.ToDictionary(m => m.Key, m => Campaign.Tracking.ClusterLink.Local(m.Value, workspace.Root)), _clock, new Dictionary<string, string>());

    [Fact]
    public async Task Recover_intents_finds_a_submission_the_batch_system_has_and_drops_one_it_never_got()
    {
        using var workspace = Workspace.Open(Ws, _clock);
        var runs = TrackingStore.Runs(workspace.Connection).Take(2).ToList();
        var reached = new JobLeg(runs[0].RunId, 1, JobName.For(workspace.Id, runs[0].RunId, 1), 10, TimeSpan.FromHours(1), 0, null, _clock.GetUtcNow());
        var lost = new JobLeg(runs[1].RunId, 1, JobName.For(workspace.Id, runs[1].RunId, 1), 10, TimeSpan.FromHours(1), 0, null, _clock.GetUtcNow());
        using (var tx = workspace.Connection.BeginTransaction())
        {
            TrackingStore.Insert(workspace.Connection, tx, reached);
            TrackingStore.Insert(workspace.Connection, tx, lost);
            tx.Commit();
        }

        // The first submission reached the batch system before the host stopped; the second never did.
        var folder = Path.Combine(Ws, runs[0].Folder);
        var id = await _clusters[Cluster].SubmitAsync(new JobRequest(reached.JobName, "/bin/true", folder, 1, TimeSpan.FromHours(1), "o", "e", new Dictionary<string, string> { ["CAMPAIGN_RUN_ID"] = runs[0].RunId }), CancellationToken.None);

        var c = Context(workspace);
        await RecoverIntents.RunAsync(c, CancellationToken.None);

        var legs = TrackingStore.Legs(workspace.Connection);
        var found = Assert.Single(legs);
        Assert.Equal((runs[0].RunId, id, LegPhase.Submitted), (found.RunId, found.JobId, found.Phase));
        Assert.Equal(RunState.Queued, TrackingStore.Run(workspace.Connection, runs[0].RunId)!.State);
        Assert.Equal(RunState.Planned, TrackingStore.Run(workspace.Connection, runs[1].RunId)!.State);
        Assert.Contains(TrackingStore.Events(workspace.Connection, runs[1].RunId), e => e.Why.Contains("never reached the batch system", StringComparison.Ordinal));
    }

    [Fact]
    public async Task Submit_holds_only_the_run_whose_request_is_refused_and_a_broken_cluster_leaves_every_run_as_it_was()
    {
        using var workspace = Workspace.Open(Ws, _clock);
        var runs = TrackingStore.Runs(workspace.Connection).Where(r => r.Cluster == Cluster).ToList();
        Assert.True(runs.Count >= 3);
        _clusters[Cluster].Refused.Add(JobName.For(workspace.Id, runs[1].RunId, 1));

        var c = Context(workspace);
        await SubmitLegs.RunAsync(c, CancellationToken.None);
        var after = TrackingStore.Runs(workspace.Connection).ToDictionary(r => r.RunId);
        Assert.Equal(RunState.Held, after[runs[1].RunId].State);
        Assert.Equal("submission rejected: sbatch: error: Batch job submission failed: Invalid account or account/partition combination specified", after[runs[1].RunId].Reason);
        Assert.All(runs.Where(r => r.RunId != runs[1].RunId), r => Assert.Equal(RunState.Queued, after[r.RunId].State));
        Assert.Empty(c.Faults);

        // Now the cluster breaks: a released run's submission fails, the run is left as it was, the cluster is at fault.
        _clusters[Cluster].Down = true;
        var release = TrackingStore.Run(workspace.Connection, runs[1].RunId)!;
        using (var tx = workspace.Connection.BeginTransaction())
        {
            TrackingStore.Save(workspace.Connection, tx, release, release.Release(_clock.GetUtcNow()));
            tx.Commit();
        }

        var broken = Context(workspace);
        await SubmitLegs.RunAsync(broken, CancellationToken.None);
        Clusters.Record(broken);
        Assert.Equal(RunState.Planned, TrackingStore.Run(workspace.Connection, runs[1].RunId)!.State);
        Assert.Equal(Cluster, Assert.Single(broken.Faults).Key);
        Assert.Single(broken.Messages, m => m.StartsWith(Cluster + ": unreachable (sbatch: error: s_p_parse_file", StringComparison.Ordinal));
        Assert.Equal(1, _clusters[Cluster].RefusedCalls); // skipped for the rest of the cycle after the first failure
        var fault = Assert.Single(ClusterFaultStore.All(workspace.Connection));
        Assert.DoesNotContain('\n', fault.Message);
        Assert.Equal(runs.Count - 1, TrackingStore.Legs(workspace.Connection).Count);
    }

    [Fact]
    public void A_run_given_up_while_its_submission_was_unconfirmed_stays_given_up_and_its_job_is_cancelled()
    {
        // Regression (faults issue, item 5): the events showed queued -> failed (abandoned), then failed -> planned
        // (leg 1 never reached ...), then a new job.
        var runs = new RunService(_clock, BatchAccess.Given(m => _clusters[m]));
        string runId;
        using (var workspace = Workspace.Open(Ws, _clock))
        {
            runId = TrackingStore.Runs(workspace.Connection).First(r => r.Cluster == Cluster).RunId;
        }

        _clusters[Cluster].LoseAnswers = true; // the job is queued, the answer never comes back
        runs.Cycle(Ws);
        using (var workspace = Workspace.Open(Ws, _clock))
        {
            Assert.Contains(TrackingStore.LegsOf(workspace.Connection, runId), s => s.Phase == LegPhase.Intent);
        }

        runs.Abandon(new RunSelection(Ws, new[] { runId }, null, null));
        _clusters[Cluster].LoseAnswers = false;
        for (var i = 0; i < 3; i++)
        {
            _clock.Advance(TimeSpan.FromHours(2));
            runs.Cycle(Ws);
        }

        using var db = Workspace.Open(Ws, _clock);
        Assert.Equal(RunState.Failed, TrackingStore.Run(db.Connection, runId)!.State);
        var legs = TrackingStore.LegsOf(db.Connection, runId);
        var only = Assert.Single(legs); // no second job for the given-up run
        Assert.Equal("abandoned", only.CancelReason);
        Assert.Contains(only.JobId!, _clusters[Cluster].Cancelled);
        Assert.DoesNotContain(TrackingStore.Events(db.Connection, runId), e => e.FromState == "failed" && e.ToState != "failed");
    }

    [Fact]
    public void Two_valid_ids_that_differ_in_a_dot_and_an_underscore_both_run()
    {
        // Regression (faults issue, item 7): "a.b" and "a_b" got one job name; every cycle then stopped on a
        // UNIQUE constraint and an unrelated run stayed planned for good.
        using var other = new TempFolder();
        var ws = Path.Combine(other.Path, "ws");
        TestWorkspace.Create(ws, _clock);
        File.WriteAllText(Path.Combine(ws, "two.csv"), "id,q,chi1z,omega0,levels,cores,cluster,core_hours\nsm.a,2,0,0.02,1,128,halyard,1000\nsm_a,3,0,0.02,1,128,halyard,1000\nsm-b,4,0,0.02,1,128,halyard,1000\n");
        new PlanService(_clock).Select(new SelectRequest(ws, Path.Combine(ws, "two.csv"), "two.csv", SelectionObjective.Coverage, 1e6, 0.5, Array.Empty<string>(), null, 0, 1500, 5, Save: true));
        Assert.Equal(3, new TrackService(_clock).Track(new TrackRequest(ws, null, null, null, false)).Added.Count);

        var report = new RunService(_clock, BatchAccess.Given(m => _clusters[m])).Cycle(ws);
        Assert.Equal(3, report.Submitted);
        Assert.DoesNotContain(report.Messages, m => m.Contains("not submitted", StringComparison.Ordinal));
        using var db = Workspace.Open(ws, _clock);
        Assert.Equal(3, TrackingStore.Legs(db.Connection).Select(s => s.JobName).Distinct().Count());
    }

    [Fact]
    public void A_run_with_a_pre_queued_leg_stays_running_and_its_stall_is_still_caught()
    {
        // Regression (faults issue, item 9): with prequeue each cycle flipped the run queued -> running -> queued
        // (two events and two notices a cycle) and the health checks, which look at running runs, never ran.
        using var other = new TempFolder();
        var ws = Path.Combine(other.Path, "ws");
        TestWorkspace.CreateTracking(ws, _clock, "sm-a,2,0,0.02,1,128,halyard,100000\n", "prequeue = true\n");
        var clusters = new Dictionary<string, SimulatedCluster>(StringComparer.Ordinal);
        foreach (var profile in Workspaces.WorkspaceAdmin.Settings(ws).Clusters.Values)
        {
            clusters[profile.Name] = new SimulatedCluster(_clock, profile, _ => 1000, TimeSpan.FromHours(1)); // 1000 h: many 48 h legs
        }

        var runs = new RunService(_clock, BatchAccess.Given(m => clusters[m]));
        for (var i = 0; i < 12; i++)
        {
            _clock.Advance(TimeSpan.FromHours(4));
            runs.Cycle(ws);
        }

        using (var db = Workspace.Open(ws, _clock))
        {
            var events = TrackingStore.Events(db.Connection, "sm-a.res1");
            Assert.Equal(0, events.Count(e => e.FromState == "running" && e.ToState == "queued")); // no leg ended yet
            Assert.Equal(2, TrackingStore.LegsOf(db.Connection, "sm-a.res1").Count); // the running one and the pre-queued one
            Assert.Equal(RunState.Running, TrackingStore.Run(db.Connection, "sm-a.res1")!.State);
        }

        // The code stops advancing: with stall_minutes = 2880 (48 h) the stall rule must still see it.
        File.WriteAllText(Path.Combine(ws, "campaign.toml"), File.ReadAllText(Path.Combine(ws, "campaign.toml")).Replace("stall_minutes = 2880", "stall_minutes = 600", StringComparison.Ordinal));
        clusters["halyard"].Stalled.Add("sm-a.res1");
        for (var i = 0; i < 8; i++)
        {
            _clock.Advance(TimeSpan.FromHours(4));
            runs.Cycle(ws);
        }

        using var after = Workspace.Open(ws, _clock);
        Assert.Contains(TrackingStore.Events(after.Connection, "sm-a.res1"), e => e.Why.Contains("no progress for", StringComparison.Ordinal));
    }

    [Fact]
    public void Excluding_a_tracked_configuration_is_refused_unless_it_is_withdrawn_and_then_its_jobs_are_cancelled()
    {
        // Regression (faults issue, item 6): a re-plan with --exclude of a tracked run left it to be submitted
        // anyway, outside the new plan's budget.
        var runs = new RunService(_clock, BatchAccess.Given(m => _clusters[m]));
        runs.Cycle(Ws); // the tracked runs are submitted
        string excluded;
        using (var workspace = Workspace.Open(Ws, _clock))
        {
            excluded = TrackingStore.Runs(workspace.Connection).First().ConfigId;
        }

        SelectRequest Replan(bool withdraw) => new(Ws, Path.Combine(Ws, "candidates.csv"), "candidates.csv", SelectionObjective.Coverage, null, 0.5, new[] { excluded }, null, 0, 1500, 5, Save: true, Withdraw: withdraw);
        var refused = Assert.Throws<InvalidInputException>(() => new PlanService(_clock).Select(Replan(false)));
        Assert.StartsWith($"--exclude {excluded}: it is tracked (", Assert.Single(refused.Problems), StringComparison.Ordinal);
        Assert.Equal(1, new PlanService(_clock).Current(Ws)!.Id); // nothing saved

        var result = new PlanService(_clock).Select(Replan(true));
        Assert.NotEmpty(result.Withdrawn!);
        Assert.DoesNotContain(excluded, result.Carried.Select(c => c.ConfigId));
        Assert.DoesNotContain(excluded, new PlanService(_clock).Current(Ws)!.ConfigIds);
        _clock.Advance(TimeSpan.FromMinutes(30));
        runs.Cycle(Ws);

        using var db = Workspace.Open(Ws, _clock);
        foreach (var id in result.Withdrawn!)
        {
            var run = TrackingStore.Run(db.Connection, id)!;
            Assert.Equal(RunState.Failed, run.State);
            Assert.Equal("withdrawn from the campaign by plan 2", run.Reason);
            var leg = Assert.Single(TrackingStore.LegsOf(db.Connection, id));
            Assert.Contains(leg.JobId!, _clusters[Cluster].Cancelled);
        }
    }
}
