using Campaign.Core.CostModel;
using Campaign.Core.Domain;
using Campaign.Core.Lifecycle;
using Campaign.Store.Schema;
using Dapper;

namespace Campaign.Store.Tests;

public class PlanStoreTests
{
    private static readonly BinaryConfiguration Binary = new(MassRatio.From(2), Spin.Aligned(0.1), Spin.Zero, 0.018);

    private static PlanEntry Entry(string id, int level, string kind = "run", double median = 100) =>
        new(Binary, new EstimateRow(id, level, kind, "box", 16, 4321.5, median, median * 1.05, median * 0.6, median * 1.7, 12.5, 2, 3.1, median * 1.2, median * 2.0, 1.5, 20.25, "model", kind == "run" ? new[] { "q beyond the logs" } : Array.Empty<string>(), 0.21, 37, kind == "ecc" ? 2 : 1),
            median * 1.4, kind == "run" ? 4321.5 : null);

    /// <summary>Entries compared field by field (the flag list by its contents).</summary>
    private static object Key(PlanEntry e) => (e with { Estimate = e.Estimate with { Extrapolation = Array.Empty<string>() } }, string.Join("|", e.Estimate.Extrapolation));

    private static PlanDraft Draft(IReadOnlyList<PlanEntry> entries, IReadOnlyList<CarriedConfiguration>? carried = null) =>
        new("coverage", 0.8, 0.5, 0.6, "test", "c.csv", entries, carried ?? Array.Empty<CarriedConfiguration>(), new Dictionary<string, double> { ["box"] = 250 }, Array.Empty<object>());

    [Fact]
    public void A_plan_keeps_one_row_per_configuration_and_level_with_its_estimate_as_saved()
    {
        using var folder = new TempFolder();
        using var connection = CampaignDatabase.Open(folder.File("c.db"), FixedTime.Default);
        var entries = new[] { Entry("a", 1, median: 100), Entry("a", 2, median: 190), Entry("a", 1, "ecc", 30) };
        var carried = new[] { new CarriedConfiguration("z", "box", 77, "1 active") };
        var first = PlanStore.Save(connection, Draft(entries, carried), FixedTime.Default);
        var second = PlanStore.Save(connection, Draft(new[] { Entry("b", 1) }), FixedTime.Default);

        Assert.Equal(first + 1, second);
        var plan = PlanStore.Current(connection)!;
        Assert.Equal(second, plan.Id);
        Assert.Equal(new[] { "b" }, plan.ConfigIds);
        Assert.Equal(250, plan.Reserved["box"]);

        // The first version is still there, row for row, and the newest entry of a run is found in it.
        var found = PlanStore.NewestEntries(connection, new[] { ("a", 2) });
        Assert.Equal(Key(entries[1]), Key(found.Single()));
        var stored = connection.Query<(string ConfigId, long Level, string Kind)>("SELECT config_id, level, kind FROM plan_entries WHERE plan_id = @first ORDER BY kind, level", new { first }).ToList();
        Assert.Equal(new[] { ("a", 1L, "run"), ("a", 2L, "run"), ("a", 1L, "trials") }, stored);
        Assert.Contains("carried over (started): z", connection.ExecuteScalar<string>("SELECT detail FROM events WHERE kind = 'plan.save' ORDER BY id LIMIT 1"));
    }

    [Fact]
    public void A_plan_round_trips_exactly_including_trials_and_carried_configurations()
    {
        using var folder = new TempFolder();
        using var connection = CampaignDatabase.Open(folder.File("c.db"), FixedTime.Default);
        var entries = new[] { Entry("a", 1), Entry("a", 1, "ecc", 30), Entry("a", 2, median: 190) };
        var carried = new[] { new CarriedConfiguration("a", "box", 77, "1 active") };
        PlanStore.Save(connection, Draft(entries, carried), FixedTime.Default);

        var plan = PlanStore.Current(connection)!;
        Assert.Equal(entries.OrderBy(e => e.Kind).ThenBy(e => e.Level).Select(Key), plan.Entries.OrderBy(e => e.Kind).ThenBy(e => e.Level).Select(Key));
        Assert.Equal(carried, plan.Carried);
        Assert.Equal(2, plan.Runs.Count());
        Assert.Equal(FixedTime.Default.GetUtcNow(), plan.CreatedAt);
    }

    [Fact]
    public void An_older_plan_is_split_per_level_a_rehearsal_gets_its_own_id_and_ids_get_resolution_labels_when_the_database_is_upgraded()
    {
        using var folder = new TempFolder();
        var path = folder.File("c.db");
        using (var old = CampaignDatabase.Open(path, FixedTime.Default, Migrations.All.Take(6).ToList()))
        {
            old.Execute("INSERT INTO plans (created_at, objective, quantile, value, upper_bound, method, pools_json, source) VALUES ('2027-01-01T00:00:00Z', 'coverage', 0.5, 1, 1, 'm', '[]', 'c.csv')");
            old.Execute("INSERT INTO plan_runs (plan_id, config_id, machine, q, chi1x, chi1y, chi1z, chi2x, chi2y, chi2z, omega0, levels, cores, cost, median, high, status) VALUES (1, 'a', 'box', 2, 0, 0, 0.1, 0, 0, 0, 0.018, '1;2', 16, 360, 300, 600, 'planned')");
            old.Execute("""
                INSERT INTO tracked_runs (run_id, config_id, level, machine, cores, folder, target_length, q, chi1x, chi1y, chi1z, chi2x, chi2y, chi2z, omega0, position, state, created_at, updated_at, rehearsal)
                VALUES ('a.L1', 'a', 1, 'box', 1, 'runs/a.L1', 100, 2, 0, 0, 0.1, 0, 0, 0, 0.018, 0, 'finished', 'x', 'x', 1)
                """);
            old.Execute("INSERT INTO segments (run_id, number, job_name, phase, worst_case_core_hours, wall_seconds, start_t, submitted_at, job_state) VALUES ('a.L1', 1, 'cmp.a_L1.s001', 'ended', 1, 1, 0, 'x', 'TimedOut')");
            old.Execute("INSERT INTO run_events (at, run_id, from_state, to_state, why) VALUES ('x', 'a.L1', '', 'planned', 'added')");
        }

        using var connection = CampaignDatabase.Open(path, FixedTime.Default);
        var plan = PlanStore.Current(connection)!;
        var levels = plan.Runs.OrderBy(e => e.Level).ToList();
        Assert.Equal(new[] { 1, 2 }, levels.Select(e => e.Level));
        // Split by 2^level, the only information an older plan kept: 2/6 and 4/6 of the configuration's figures.
        Assert.Equal(100, levels[0].Estimate.Median, 9);
        Assert.Equal(200, levels[1].Estimate.Median, 9);
        Assert.Equal(240, levels[1].Cost, 9);
        Assert.Equal("migrated", levels[0].Estimate.Source);
        Assert.Null(levels[0].TargetLength);

        Assert.Equal("a.res1.r1", connection.ExecuteScalar<string>("SELECT run_id FROM tracked_runs"));
        Assert.Equal("a.res1.r1", connection.ExecuteScalar<string>("SELECT run_id FROM legs"));
        // Schema 9: ".L1" became ".res1" (the former id is kept), the segment a leg, its state one of ours; the name
        // the batch system knows stays.
        Assert.Equal("cmp.a_L1.s001", connection.ExecuteScalar<string>("SELECT job_name FROM legs"));
        Assert.Equal("a.L1.r1", connection.ExecuteScalar<string>("SELECT former_id FROM tracked_runs"));
        Assert.Equal("out_of_time", connection.ExecuteScalar<string>("SELECT job_state FROM legs"));
        Assert.Equal("a.res1.r1", connection.ExecuteScalar<string>("SELECT run_id FROM run_events"));
        Assert.Equal("ok", connection.ExecuteScalar<string>("PRAGMA foreign_key_check") ?? "ok");
    }

    [Fact]
    public void Upgrading_to_schema_9_renames_machines_to_clusters_inside_the_stored_model_and_plan_too()
    {
        using var folder = new TempFolder();
        var path = folder.File("c.db");
        using (var old = CampaignDatabase.Open(path, FixedTime.Default, Migrations.All.Take(8).ToList()))
        {
            // As System.Text.Json wrote them before: '+' escaped, the per-cluster factors and counts under their former names.
            old.Execute("""INSERT INTO cost_models (fitted_at, run_count, model_json) VALUES ('x', 3, '{"FeatureSet":"\u002Bspin\u002Bcores\u002Bmachine","Terms":["intercept","machine:halyard"],"Machines":{"halyard":3}}')""");
            old.Execute("""INSERT INTO plans (created_at, objective, quantile, value, upper_bound, method, pools_json, source, carried_json) VALUES ('2027-01-01T00:00:00Z', 'coverage', 0.5, 1, 1, 'm', '[]', 'c.csv', '[{"ConfigId":"a","Machine":"halyard","RemainingCost":5,"Why":"w"}]')""");
        }

        using var connection = CampaignDatabase.Open(path, FixedTime.Default);
        var model = connection.ExecuteScalar<string>("SELECT model_json FROM cost_models")!;
        Assert.Equal("""{"FeatureSet":"\u002Bspin\u002Bcores\u002Bcluster","Terms":["intercept","cluster:halyard"],"Clusters":{"halyard":3}}""", model);
        Assert.Equal("halyard", PlanStore.Current(connection)!.Carried.Single().Cluster);
    }
}
