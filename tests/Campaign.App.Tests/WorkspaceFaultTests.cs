using Campaign.Batch;
using Campaign.App.Plans;
using Campaign.App.Runs;
using Campaign.App.Tests.Support;
using Campaign.App.Workspaces;
using Campaign.Core.Domain;
using Campaign.Core.Lifecycle;
using Campaign.Core.Selection;
using Campaign.Store;

namespace Campaign.App.Tests;

/// <summary>Faults between workspaces and of a workspace's own database (regressions of the faults issue).</summary>
public sealed class WorkspaceFaultTests : IDisposable
{
    private readonly TempFolder _folder = new();
    private readonly SimulatedClock _clock = new(new DateTimeOffset(2027, 2, 1, 8, 0, 0, TimeSpan.Zero));
    private readonly Dictionary<string, SimulatedCluster> _clusters = new(StringComparer.Ordinal);

    public WorkspaceFaultTests()
    {
        foreach (var ws in new[] { A, B })
        {
            TestWorkspace.CreateTracking(ws, _clock, "c1,2,0,0.02,1,128,halyard,100000\n");
        }

        // One queue shared by both workspaces, as one user's queue on one cluster.
        foreach (var profile in WorkspaceAdmin.Settings(A).Clusters.Values)
        {
            _clusters[profile.Name] = new SimulatedCluster(_clock, profile, _ => 1000, TimeSpan.FromHours(1));
        }
    }

    private string A => Path.Combine(_folder.Path, "a");

    private string B => Path.Combine(_folder.Path, "b");

    public void Dispose() => _folder.Dispose();

    private RunService Runs => new(_clock, BatchAccess.Given(m => _clusters[m]));

    [Fact]
    public void A_lost_submission_answer_never_adopts_or_cancels_another_workspaces_job()
    {
        // Regression (faults issue, item 1): both workspaces track c1.res1 on one cluster; B's submission times out,
        // and B's next cycle found A's job by its name, adopted it, and 'abandon' in B cancelled it.
        Runs.Cycle(A);
        string aJob;
        using (var a = Workspace.Open(A, _clock))
        {
            aJob = TrackingStore.LegsOf(a.Connection, "c1.res1").Single().JobId!;
        }

        _clusters["halyard"].TimeOutSubmissions = true;
        Runs.Cycle(B);
        _clusters["halyard"].TimeOutSubmissions = false;
        _clock.Advance(TimeSpan.FromMinutes(10));
        Runs.Cycle(B);

        using (var b = Workspace.Open(B, _clock))
        {
            var legs = TrackingStore.LegsOf(b.Connection, "c1.res1");
            Assert.DoesNotContain(legs, s => s.JobId == aJob);
            Assert.Contains(TrackingStore.Events(b.Connection, "c1.res1"), e => e.Why.Contains("never reached the batch system", StringComparison.Ordinal));
        }

        Runs.Abandon(new RunSelection(B, new[] { "c1.res1" }, null, null));
        Assert.DoesNotContain(aJob, _clusters["halyard"].Cancelled);
    }

    [Fact]
    public void A_deleted_or_emptied_database_is_never_replaced_by_an_empty_one()
    {
        // Regression (faults issue, item 2): after 'rm campaign.db', status printed "No tracked runs" (exit 0)
        // from a fresh, empty database.
        var database = Path.Combine(A, "campaign.db");
        File.Delete(database);
        var missing = Assert.Throws<InvalidOperationException>(() => new StatusService(_clock).Status(A, 0));
        Assert.StartsWith($"{database}: the workspace's database is missing though campaign.toml is here; nothing was created. Restore campaign.db from a backup", missing.Message, StringComparison.Ordinal);
        Assert.False(File.Exists(database));

        File.WriteAllBytes(database, Array.Empty<byte>());
        var empty = Assert.Throws<InvalidOperationException>(() => Runs.Cycle(A));
        Assert.Contains("database is empty", empty.Message, StringComparison.Ordinal);
        Assert.Equal(0, new FileInfo(database).Length);
    }

    [Fact]
    public void The_daemon_stops_when_its_database_is_deleted_under_it()
    {
        using var stop = new CancellationTokenSource(TimeSpan.FromSeconds(60));
        var lines = new List<string>();
        var watch = Task.Run(() => Runs.Watch(new WatchRequest(A, 0.2, UntilDone: false), l => { lock (lines) { lines.Add(l); } }, _ => { }, stop.Token));
        SpinWait.SpinUntil(() => { lock (lines) { return lines.Count >= 2; } }, TimeSpan.FromSeconds(30)); // the first cycle ran
        File.Delete(Path.Combine(A, "campaign.db"));
        var error = Assert.Throws<AggregateException>(() => watch.Wait(TimeSpan.FromSeconds(30))).InnerException;
        Assert.IsType<InvalidOperationException>(error);
        Assert.Contains("campaign.db was deleted; nothing more was written", error!.Message, StringComparison.Ordinal);
        Assert.False(stop.IsCancellationRequested);
    }

    [Fact]
    public void A_notify_command_that_hangs_is_stopped_leaves_no_process_and_holds_the_cycle_up_only_briefly()
    {
        // Regression (faults issue, item 12): ["sleep", "3600"] blocked 30 s per notice and left its processes running.
        using var other = new TempFolder();
        var ws = Path.Combine(other.Path, "ws");
        TestWorkspace.CreateTracking(ws, _clock, "c1,2,0,0.02,1;2;3,128,halyard,100000\n", "notify_command = [\"sleep\", \"3601.25\"]\n");

        var watch = System.Diagnostics.Stopwatch.StartNew();
        var report = Runs.Cycle(ws); // three runs go planned -> queued: three notices
        watch.Stop();

        Assert.Equal(3, report.Submitted);
        Assert.True(watch.Elapsed < Tracking.Notifier.PerCycle + TimeSpan.FromSeconds(5), $"the cycle took {watch.Elapsed}");
        Assert.Equal(2, report.Messages.Count(m => m.StartsWith("notify command did not finish within 5 s and was stopped", StringComparison.Ordinal)));
        Assert.Contains(report.Messages, m => m.StartsWith("notify command: 1 notices not sent", StringComparison.Ordinal));
        var left = Directory.EnumerateDirectories("/proc").Select(d => Path.Combine(d, "cmdline")).Where(File.Exists)
            .Select(f => { try { return File.ReadAllText(f); } catch (IOException) { return ""; } catch (UnauthorizedAccessException) { return ""; } })
            .Count(c => c.Contains("3601.25", StringComparison.Ordinal));
        Assert.Equal(0, left);
    }

    [Fact]
    public void After_a_backup_is_restored_the_first_cycle_finds_later_jobs_by_name_and_submits_none_twice()
    {
        // Regression (faults issue, item 4): restoring a backup and ticking queued a second job of the same name,
        // both writing into the same run folder.
        Runs.Cycle(A); // leg 1 of c1.res1 submitted
        var backup = new WorkspaceAdmin(_clock).Backup(A, Path.Combine(_folder.Path, "backup"));
        Assert.Equal("ok", backup.Integrity);

        _clock.Advance(TimeSpan.FromHours(49)); // leg 1 runs into its 48 h limit; leg 2 is submitted
        Runs.Cycle(A);
        _clock.Advance(TimeSpan.FromHours(2));
        Runs.Cycle(A);
        Assert.Equal(2, _clusters["halyard"].SubmittedNames.Count);

        // The restore, as docs/operations.md says: stop, copy the backup's files into place, start again.
        foreach (var side in new[] { "campaign.db-wal", "campaign.db-shm" })
        {
            File.Delete(Path.Combine(A, side));
        }

        File.Copy(Path.Combine(backup.Destination, "campaign.db"), Path.Combine(A, "campaign.db"), overwrite: true);
        var report = Runs.Cycle(A);

        var names = _clusters["halyard"].SubmittedNames.ToList();
        Assert.Equal(names.Count, names.Distinct().Count());
        Assert.Equal(2, names.Count);
        Assert.Contains(report.Messages, m => m.StartsWith("after a restore: 1 jobs submitted after the backup were found by name", StringComparison.Ordinal));
        using var db = Workspace.Open(A, _clock);
        var legs = TrackingStore.LegsOf(db.Connection, "c1.res1");
        Assert.Equal(new[] { 1, 2 }, legs.Select(s => s.Number));
        Assert.Equal(LegPhase.Ended, legs[0].Phase);
        Assert.False(WorkspaceBackup.NeedsJobLookup(db.Connection));
    }

    [Fact]
    public void After_an_upgraded_backup_is_restored_a_job_named_the_former_way_is_found_and_not_submitted_again()
    {
        // Schema 9 renamed runs (".L1" to ".res1") and legs; jobs given to a batch system before the upgrade keep
        // their former names. A backup from before the upgrade, restored later, must still find them by name.
        Runs.Cycle(A); // leg 1 of c1.res1
        var backup = new WorkspaceAdmin(_clock).Backup(A, Path.Combine(_folder.Path, "backup"));
        _clock.Advance(TimeSpan.FromHours(49));
        Runs.Cycle(A); // leg 2 submitted
        string workspaceId;
        using (var db = Workspace.Open(A, _clock))
        {
            workspaceId = db.Id;
        }

        // As the former version named them: the run was c1.L1 and its legs ".sNNN".
        _clusters["halyard"].Rename(JobName.For(workspaceId, "c1.res1", 2), JobName.Former(workspaceId, "c1.L1", 2));
        using (var restored = new Microsoft.Data.Sqlite.SqliteConnection($"Data Source={Path.Combine(backup.Destination, "campaign.db")};Pooling=False"))
        {
            restored.Open();
            Dapper.SqlMapper.Execute(restored, "UPDATE tracked_runs SET former_id = 'c1.L1' WHERE run_id = 'c1.res1'");
        }

        foreach (var side in new[] { "campaign.db-wal", "campaign.db-shm" })
        {
            File.Delete(Path.Combine(A, side));
        }

        File.Copy(Path.Combine(backup.Destination, "campaign.db"), Path.Combine(A, "campaign.db"), overwrite: true);
        var report = Runs.Cycle(A);

        Assert.Contains(report.Messages, m => m.StartsWith("after a restore: 1 jobs submitted after the backup were found by name", StringComparison.Ordinal));
        var names = _clusters["halyard"].SubmittedNames.Where(n => n.Contains(".c1.", StringComparison.Ordinal)).ToList();
        Assert.Equal(2, names.Count); // nothing submitted again
        using var after = Workspace.Open(A, _clock);
        Assert.Equal(JobName.Former(workspaceId, "c1.L1", 2), TrackingStore.LegsOf(after.Connection, "c1.res1")[1].JobName);
    }

    [Fact]
    public void Check_refuses_a_stall_time_no_shorter_than_a_clusters_legs_naming_the_line_and_the_clusters()
    {
        // Regression (faults issue, item 10): the shipped workstation profile (2 h) with the default 120 min stall
        // time could never see a stall. The test workspace's stall_minutes = 2880 is no shorter than any cluster's limit.
        var error = Assert.Throws<InvalidInputException>(() => new WorkspaceAdmin(_clock).Check(A));
        var problem = Assert.Single(error.Problems);
        Assert.Equal($"{Path.Combine(A, "campaign.toml")}:", problem[..(Path.Combine(A, "campaign.toml").Length + 1)]);
        Assert.EndsWith(":60:1: stall_minutes = 2880: expected less than the leg wall time of every cluster (halyard 2880 min, gunwale 1440 min, workbench 1440 min): a stall could never be seen before the wall-time limit ends the leg", problem, StringComparison.Ordinal);

        File.WriteAllText(Path.Combine(A, "campaign.toml"), File.ReadAllText(Path.Combine(A, "campaign.toml")).Replace("stall_minutes = 2880", "stall_minutes = 600", StringComparison.Ordinal));
        Assert.Equal("ok", new WorkspaceAdmin(_clock).Check(A).Integrity);
    }
}
