using Campaign.Batch;
using Campaign.Batch.Resilience;
using Campaign.Cli.Commands;
using Campaign.Cli.Tests.Support;
using Campaign.Store;
using Campaign.Tracking;
using Dapper;
using Xunit.Abstractions;

namespace Campaign.Cli.Tests.Reliability;

/// <summary>
/// Campaigns on the local runner (real detached processes, the demo payload, 3-second legs) under injected
/// faults. Seeded and bounded in time; the figures they print are recorded in docs/reliability.md.
/// </summary>
[Collection("tracking")]
public sealed class FaultInjectionTests(ITestOutputHelper output) : IDisposable
{
    private readonly TempFolder _folder = new();

    public void Dispose()
    {
        LocalJobs.KillAll(Ws());
        _folder.Dispose();
    }

    private string Ws(string relative = "") => Path.Combine(_folder.Path, "ws", relative);

    private void Prepare(string only)
    {
        Assert.Equal(0, CliRun.Demo(_folder.Path, "ws").ExitCode);
        var track = CliRun.Live(_folder.Path, "--dir", "ws", "track", "--on", "workbench", "--cores", "1", "--only", only);
        Assert.True(track.ExitCode == 0, track.Err);
    }

    /// <summary>Cycles in this process, as `campaign tick` runs them, with the injector inside the retry decorator.</summary>
    private List<TickReport> RunCycles(FaultInjector faults, TimeSpan limit)
    {
        var retry = new RetryOptions(6, TimeSpan.FromMilliseconds(50), TimeSpan.FromMilliseconds(400), TimeSpan.FromSeconds(1));
        var reports = new List<TickReport>();
        var deadline = DateTime.UtcNow + limit;
        while (DateTime.UtcNow < deadline)
        {
            using var workspace = Workspace.Open(Ws(), TimeProvider.System);
            var systems = BatchSystemFactory.Create(workspace, SelfCommand.Supervisor(), retry, TimeProvider.System, (_, adapter) => faults.Around(adapter));
            var report = new Reconciler(workspace, systems, TimeProvider.System, SelfCommand.JobEnvironment()).TickAsync(CancellationToken.None).GetAwaiter().GetResult();
            reports.Add(report);
            if (report.Active == 0)
            {
                return reports;
            }

            Thread.Sleep(500);
        }

        Assert.Fail($"the campaign did not finish in time under {faults}");
        return reports;
    }

    [Fact]
    public void Transient_batch_system_faults_are_retried_without_failing_or_duplicating_anything_and_a_permanent_one_is_reported_once()
    {
        Prepare("sm-q1-a00,sm-q2-a04");
        var refused = WorkspaceId.JobName(Ws(), "sm-q2-a04.res2", 1);
        var faults = new FaultInjector(seed: 909, rate: 0.35, permanentlyRefused: refused);
        var reports = RunCycles(faults, TimeSpan.FromSeconds(150));
        output.WriteLine($"{reports.Count} cycles; {faults}");

        Assert.True(faults.Total >= 20, faults.ToString());
        Assert.True(faults.LostSubmissions > 0, "no submission lost its answer: the dangerous case was not exercised; " + faults);
        Assert.All(new[] { "refused", "hang", "lost_answer", "garbled", "permanent" }, kind => Assert.True(faults.Injected.GetValueOrDefault(kind) > 0, kind + ": " + faults));
        var names = LocalJobs.SubmittedNames(Ws());
        Assert.Equal(names.Count, names.Distinct().Count()); // no leg submitted twice, lost answers included
        Assert.DoesNotContain(refused, names);

        using var db = CampaignDatabase.Open(Ws("campaign.db"), TimeProvider.System);
        var states = db.Query<(string RunId, string State, string Reason)>("SELECT run_id AS RunId, state AS State, reason AS Reason FROM tracked_runs").ToDictionary(r => r.RunId);
        Assert.Equal(6, states.Count);
        Assert.All(states.Values.Where(r => r.RunId != "sm-q2-a04.res2"), r => Assert.True(r.State == "finished", $"{r.RunId}: {r.State} {r.Reason}"));
        Assert.Equal("held", states["sm-q2-a04.res2"].State);
        Assert.Equal("submission rejected: sbatch: error: Batch job submission failed: Invalid account or account/partition combination specified", states["sm-q2-a04.res2"].Reason);
        Assert.Equal(1, db.ExecuteScalar<long>("SELECT COUNT(*) FROM run_events WHERE run_id = 'sm-q2-a04.res2' AND to_state = 'held'"));
        Assert.Equal(1, faults.Injected["permanent"]); // surfaced once: a held run is not submitted again
        // Nothing was recorded as failed because of an injected fault: every ended leg ended as the payload did.
        Assert.Equal(0, db.ExecuteScalar<long>("SELECT COUNT(*) FROM legs WHERE job_state NOT IN ('succeeded', 'out_of_time')"));
        Assert.Equal(0, db.ExecuteScalar<long>("SELECT COUNT(*) FROM legs WHERE phase <> 'ended'"));
    }
}
