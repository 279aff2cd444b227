using Campaign.Core.Domain;
using Campaign.Core.Selection;
using Dapper;

namespace Campaign.Store.Tests;

public class PlanStoreTests
{
    private static PlannedRun Run(string id, double cost = 100) =>
        new(id, "box", new BinaryConfiguration(MassRatio.From(2), Spin.Aligned(0.1), Spin.Zero, 0.018), new[] { 1, 2 }, 16, cost, cost * 0.9, cost * 1.3, PlanStore.Planned);

    private static SelectionResult Result(int count) => new(Enumerable.Range(0, count).Select(i => new Assignment(i, 0)).ToList(), 0.5, 0.6, "test", 0);

    [Fact]
    public void Each_save_is_a_new_version_and_started_runs_are_never_dropped()
    {
        using var folder = new TempFolder();
        using var connection = CampaignDatabase.Open(folder.File("c.db"), FixedTime.Default);
        var pools = new[] { new PoolUse("box", 1000, 200, 180, 260) };
        var (first, _) = PlanStore.Save(connection, "coverage", 0.5, Result(2), new[] { Run("a"), Run("b") }, pools, "c.csv", FixedTime.Default);
        connection.Execute("UPDATE plan_runs SET status = 'running' WHERE plan_id = @first AND config_id = 'a'", new { first });

        var (second, carried) = PlanStore.Save(connection, "coverage", 0.8, Result(1), new[] { Run("c") }, pools, "c.csv", FixedTime.Default);
        Assert.Equal(first + 1, second);
        Assert.Equal(1, carried);
        var plan = PlanStore.Current(connection)!;
        Assert.Equal(second, plan.Id);
        Assert.Equal(0.8, plan.Quantile);
        Assert.Equal(new[] { "a", "c" }, plan.Runs.Select(r => r.ConfigId));
        Assert.Equal("running", plan.Runs[0].Status);
        Assert.Equal(new[] { 1, 2 }, plan.Runs[0].Levels);
        Assert.Equal(2, connection.ExecuteScalar<long>("SELECT count(*) FROM plan_runs WHERE plan_id = @first", new { first }));
    }
}
