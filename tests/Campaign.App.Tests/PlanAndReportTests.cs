using Campaign.App.Estimates;
using Campaign.App.Forecasts;
using Campaign.App.Logs;
using Campaign.App.Models;
using Campaign.App.Plans;
using Campaign.App.Reports;
using Campaign.App.Runs;
using Campaign.App.Tests.Support;
using Campaign.Core.CostModel;
using Campaign.Core.Domain;
using Campaign.Core.Selection;

namespace Campaign.App.Tests;

/// <summary>What a saved plan keeps is what the estimate said: nothing is approximated after the save.</summary>
public sealed class PlanAndReportTests : IDisposable
{
    private readonly TempFolder _folder = new();
    private readonly SimulatedClock _clock = new(new DateTimeOffset(2027, 2, 1, 8, 0, 0, TimeSpan.Zero));

    public PlanAndReportTests()
    {
        TestWorkspace.Create(Ws, _clock);
        new RunLogService(_clock).Import(new ImportLogsRequest(Ws, Path.Combine(Ws, "run-logs.csv"), "run-logs.csv", false));
        new CostModelService(_clock).Fit(Ws, new CostFitOptions { Robust = true });
    }

    private string Ws => Path.Combine(_folder.Path, "ws");

    public void Dispose() => _folder.Dispose();

    [Fact]
    public void The_reports_proposal_table_without_a_candidate_file_is_the_estimate_of_the_planned_configurations_row_for_row()
    {
        new PlanService(_clock).Select(new SelectRequest(Ws, Path.Combine(Ws, "candidates.csv"), "candidates.csv", SelectionObjective.Coverage, null, 0.8, Array.Empty<string>(), null, 2, 1500, 5, Save: true));
        var plan = new PlanService(_clock).Current(Ws)!;
        var estimate = new EstimateService(_clock).Estimate(new EstimateRequest(Ws, Path.Combine(Ws, "candidates.csv"), "candidates.csv", new EstimateOptions { EccentricityTrials = 2 }));
        // estimate shows a candidate on the first cluster it lists; select may assign it to another one. Compare
        // the configurations the plan put on that same cluster (most of them).
        var clusterOf = plan.Entries.GroupBy(e => e.ConfigId).ToDictionary(g => g.Key, g => g.First().Cluster);
        var expected = estimate.Estimate.Runs.Where(r => clusterOf.TryGetValue(r.Id, out var m) && m == r.Cluster)
            .Select(r => (Id: r.Id + (r.Kind == "ecc" ? " (trials)" : ""), r.Level, r.Cluster, r.Median, r.Low, r.High, r.ChargedCoreHours, r.Legs))
            .OrderBy(r => r.Id, StringComparer.Ordinal).ThenBy(r => r.Level).ToList();

        var data = new ReportService(_clock).Gather(new ReportRequest(Ws, Path.Combine(_folder.Path, "report"), null, null, 50));
        Assert.Equal(plan.Entries.Count, data.Proposal.Count);
        var compared = expected.Select(e => e.Id).ToHashSet(StringComparer.Ordinal);
        var table = data.Proposal.Where(r => compared.Contains(r.Id)).Select(r => (r.Id, r.Level, r.Cluster, r.Median, r.Low, r.High, r.Charged, r.Legs))
            .OrderBy(r => r.Id, StringComparer.Ordinal).ThenBy(r => r.Level).ToList();
        Assert.True(compared.Count * 2 >= data.Proposal.Select(r => r.Id).Distinct().Count(), $"only {compared.Count} configurations to compare");
        Assert.Equal(expected.Count, table.Count);
        for (var i = 0; i < expected.Count; i++)
        {
            Assert.Equal((expected[i].Id, expected[i].Level, expected[i].Cluster, expected[i].Legs), (table[i].Id, table[i].Level, table[i].Cluster, table[i].Legs));
            Assert.Equal(expected[i].Median, table[i].Median, 9);
            Assert.Equal(expected[i].Low, table[i].Low, 9);
            Assert.Equal(expected[i].High, table[i].High, 9);
            Assert.Equal(expected[i].ChargedCoreHours, table[i].Charged, 9);
            Assert.True(table[i].Low < table[i].Median && table[i].Median < table[i].High);
        }

        Assert.Contains(table, r => r.Level == 1);
        Assert.Contains(table, r => r.Level == 3);

        // The burn-down's plan line and the forecast cover the whole plan before anything is tracked.
        Assert.All(data.Allocations, a => Assert.Equal(plan.Entries.Where(e => e.Cluster == a.Cluster).Sum(e => e.Estimate.ChargedCoreHours), a.PlannedCoreHours, 6));
        var forecast = new ForecastService(_clock).Forecast(new ForecastRequest(Ws, 20, 1));
        Assert.Equal(plan.Runs.Count(), forecast.RunsLeft);
        Assert.Equal(plan.Runs.Count(), data.Forecast!.Runs.Count);
    }

    [Fact]
    public void Tracking_only_configurations_of_the_plan_is_allowed_and_an_unknown_one_is_refused_naming_the_plan()
    {
        new PlanService(_clock).Select(new SelectRequest(Ws, Path.Combine(Ws, "candidates.csv"), "candidates.csv", SelectionObjective.Coverage, null, 0.5, Array.Empty<string>(), null, 0, 1500, 5, Save: true));
        var error = Assert.Throws<InvalidInputException>(() => new TrackService(_clock).Track(new TrackRequest(Ws, null, null, new[] { "no-such-config" }, false)));
        Assert.StartsWith("--only no-such-config: not a configuration of plan 1: expected one of ", Assert.Single(error.Problems), StringComparison.Ordinal);
        Assert.Empty(new StatusService(_clock).Status(Ws, 0).Runs); // nothing was changed
    }

    [Fact]
    public void Tracking_a_run_whose_id_an_imported_log_has_is_refused_and_the_import_is_never_overwritten()
    {
        // Regression (faults issue, item 3): a finished tracked run replaced an imported log of the same id without a word.
        new PlanService(_clock).Select(new SelectRequest(Ws, Path.Combine(Ws, "candidates.csv"), "candidates.csv", SelectionObjective.Coverage, null, 0.5, Array.Empty<string>(), null, 0, 1500, 5, Save: true));
        var config = new PlanService(_clock).Current(Ws)!.ConfigIds[0];
        var file = Path.Combine(Ws, "older.csv");
        File.WriteAllText(file, "run_id,q,chi1x,chi1y,chi1z,chi2x,chi2y,chi2z,omega0,level,cores,cluster,wall_hours,outcome,core_hours,t_end,legs,checkpoint_gb,output_gb,started,finished,notes\n"
            + $"{config}.res1,7,0,0,0,0,0,0,0.0162,1,96,gunwale,1597,completed,122661,8165,68,5.77,12.6,2025-01-09T22:00:00Z,2025-05-08T13:22:30Z,an older run of ours\n");
        new RunLogService(_clock).Import(new ImportLogsRequest(Ws, file, "older.csv", false));

        var error = Assert.Throws<InvalidInputException>(() => new TrackService(_clock).Track(new TrackRequest(Ws, null, null, new[] { config }, false)));
        Assert.StartsWith($"{config}.res1: a run log imported from older.csv has this id: expected run ids that are new", Assert.Single(error.Problems), StringComparison.Ordinal);
        Assert.Empty(new StatusService(_clock).Status(Ws, 0).Runs);

        using var db = Store.Workspace.Open(Ws, _clock);
        var log = Store.RunLogStore.All(db.Connection).Single(l => l.RunId == config + ".res1");
        using (var tx = db.Connection.BeginTransaction())
        {
            Assert.False(Store.TrackingStore.LogFinishedRun(db.Connection, tx, log with { Cluster = "halyard", WallHours = 1 }, _clock.GetUtcNow()));
            tx.Commit();
        }

        var kept = Store.RunLogStore.All(db.Connection).Single(l => l.RunId == config + ".res1");
        Assert.Equal((7.0, "gunwale", 1597.0), (kept.Configuration.Q.Value, kept.Cluster, kept.WallHours));
    }

    [Fact]
    public void A_device_a_directory_and_a_run_too_long_to_cost_are_refused_with_exit_2_messages_not_crashes()
    {
        // Regression (faults issue, item 14): /dev/zero ran out of memory after 22 s, a directory was "no such file",
        // and q = 1000 with omega0 = 0.0001 (both within the documented ranges) overflowed in the estimate.
        var estimate = new EstimateService(_clock);
        var device = Assert.Throws<InvalidInputException>(() => estimate.Estimate(new EstimateRequest(Ws, "/dev/zero", "/dev/zero", new EstimateOptions())));
        Assert.Equal("/dev/zero: not a regular file (a device or a pipe gives more than the 0 bytes it states): expected a candidate file (CSV)", Assert.Single(device.Problems));
        var folder = Assert.Throws<InvalidInputException>(() => estimate.Estimate(new EstimateRequest(Ws, Path.Combine(Ws, "clusters"), "clusters", new EstimateOptions())));
        Assert.Equal("clusters: is a directory: expected a candidate file (CSV)", Assert.Single(folder.Problems));

        var file = Path.Combine(Ws, "long.csv");
        File.WriteAllText(file, "id,q,chi1z,omega0\nlong,1000,0,0.0001\n");
        var tooLong = Assert.Throws<InvalidInputException>(() => estimate.Estimate(new EstimateRequest(Ws, file, "long.csv", new EstimateOptions())));
        Assert.StartsWith("long.csv:2:4: omega0 = 0.0001: expected a run of at most 10,000,000 M (this one would last 9.12E+11 M)", Assert.Single(tooLong.Problems), StringComparison.Ordinal);
        Assert.Throws<InvalidInputException>(() => new PlanService(_clock).Select(new SelectRequest(Ws, file, "long.csv", SelectionObjective.Coverage, 1e6, 0.5, Array.Empty<string>(), null, 0, 1500, 5, Save: true)));
        Assert.Null(new PlanService(_clock).Current(Ws));
    }
}
