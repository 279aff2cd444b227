using Campaign.Core.Configuration;
using Campaign.Core.CostModel;
using Campaign.Core.Domain;
using Campaign.Core.Physics;
using Dapper;

namespace Campaign.Store.Tests;

public class RunLogStoreTests
{
    private const string Logs = """
        run_id,q,chi1x,chi1y,chi1z,chi2x,chi2y,chi2z,omega0,level,cores,cluster,wall_hours,outcome,t_end,output_gb,started,extra
        a,2,0.1,0.2,0.3,0,0,-0.4,0.018,2,128,box,100,completed,6000,12.5,2026-01-02T03:04:05Z,kept
        b,1,0,0,0,0,0,0,0.02,1,64,box,10,partial,2000,,,
        """;

    private static Workspace NewWorkspace(TempFolder folder)
    {
        var template = new WorkspaceTemplate("[campaign]\nname = \"T\"\nclusters = [\"box\"]\n", new Dictionary<string, string>
        {
            ["box.toml"] = "name = \"box\"\nbatch_system = \"local\"\ncores_per_node = 8\nmemory_per_node_gb = 32\nwall_limit_hours = 4\ncharge_whole_nodes = false\n",
        });
        WorkspaceCreator.Create(folder.Path, template, false, FixedTime.Default);
        return Workspace.Open(folder.Path, FixedTime.Default);
    }

    [Fact]
    public void Imported_runs_read_back_equal_with_their_extra_columns_kept()
    {
        using var folder = new TempFolder();
        using var workspace = NewWorkspace(folder);
        var rows = RunLogReader.Read(Logs, "l.csv", new LengthSettings(), new[] { "box" });
        var result = RunLogStore.Import(workspace.Connection, rows, "l.csv", replace: false, FixedTime.Default);
        Assert.Equal(new ImportResult(2, 0), result);
        var stored = RunLogStore.All(workspace.Connection);
        Assert.Equal(rows.Select(r => r.Log), stored);
        Assert.Equal("{\"extra\":\"kept\"}", workspace.Connection.ExecuteScalar<string>("SELECT extra_json FROM run_logs WHERE run_id = 'a'"));
        Assert.Equal("logs.import", EventLog.Recent(workspace.Connection, 1)[0].Kind);
    }

    [Fact]
    public void A_clash_without_replace_changes_nothing_and_replace_overwrites()
    {
        using var folder = new TempFolder();
        using var workspace = NewWorkspace(folder);
        var rows = RunLogReader.Read(Logs, "l.csv", new LengthSettings(), new[] { "box" });
        RunLogStore.Import(workspace.Connection, rows, "l.csv", false, FixedTime.Default);
        var changed = RunLogReader.Read(Logs.Replace(",100,completed", ",150,completed", StringComparison.Ordinal), "m.csv", new LengthSettings(), new[] { "box" });
        var error = Assert.Throws<InvalidInputException>(() => RunLogStore.Import(workspace.Connection, changed, "m.csv", false, FixedTime.Default));
        Assert.Equal(2, error.Problems.Count);
        Assert.Equal(100, RunLogStore.All(workspace.Connection)[0].WallHours);
        RunLogStore.Import(workspace.Connection, changed, "m.csv", true, FixedTime.Default);
        Assert.Equal(150, RunLogStore.All(workspace.Connection)[0].WallHours);
        Assert.Equal(2, workspace.Connection.ExecuteScalar<long>("SELECT count(*) FROM run_logs"));
    }

    [Fact]
    public void A_fitted_model_round_trips_through_the_database()
    {
        using var folder = new TempFolder();
        using var workspace = NewWorkspace(folder);
        var random = new Random(1);
        var data = Enumerable.Range(0, 30).Select(i => new CostObservation("r" + i, 8 + random.NextDouble(), random.NextDouble(), random.NextDouble(), 1 + (i % 3), 5, "box", 0)).ToList();
        var cost = data.Select(o => Math.Exp(o.LogLength + o.LogQ + 0.7 * o.Level + 0.1 * random.NextDouble())).ToList();
        var model = CostModelFitter.Fit(data, cost, new CostFitOptions());
        var id = CostModelStore.Save(workspace.Connection, model, FixedTime.Default);
        var (loadedId, at, loaded, _, _) = CostModelStore.Latest(workspace.Connection)!;
        Assert.Equal(id, loadedId);
        Assert.Equal("2027-03-01T12:00:00.0000000+00:00", at);
        Assert.Equal(model.Coefficients, loaded.Coefficients);
        Assert.Equal(model.Predict(data[3], 0.9), loaded.Predict(data[3], 0.9), new PredictionComparer());
    }

    private sealed class PredictionComparer : IEqualityComparer<CostPrediction>
    {
        public bool Equals(CostPrediction? x, CostPrediction? y) => x!.Median == y!.Median && x.Low == y.Low && x.High == y.High && x.Extrapolation.SequenceEqual(y.Extrapolation);

        public int GetHashCode(CostPrediction obj) => obj.Median.GetHashCode();
    }
}
