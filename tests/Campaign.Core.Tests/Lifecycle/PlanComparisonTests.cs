using Campaign.Core.Lifecycle;

namespace Campaign.Core.Tests.Lifecycle;

public class PlanComparisonTests
{
    private static PlanEntry Entry(string config, int level, double cost, string cluster = "box") => Some.Entry(config, level, cost, cluster);

    private static PlanVersion Plan(long id, PlanEntry[] entries, params CarriedConfiguration[] carried) =>
        new(id, DateTimeOffset.UnixEpoch.AddDays(id), "coverage", 0.8, 0.5, 1, "m", "c.csv", entries, carried, new Dictionary<string, double>());

    [Fact]
    public void Each_configuration_is_added_dropped_carried_over_or_kept_and_the_costs_are_summed_per_cluster()
    {
        var older = Plan(1, new[] { Entry("a", 1, 100), Entry("a", 2, 200), Entry("b", 1, 50), Entry("c", 1, 70, "big") });
        var newer = Plan(2, new[] { Entry("a", 1, 40), Entry("a", 2, 200), Entry("c", 1, 70, "big"), Entry("d", 1, 30, "big") },
            new CarriedConfiguration("a", "box", 240, "1 of 2 levels running"));
        var diff = PlanComparison.Between(older, newer);

        Assert.Equal(new[] { "d" }, diff.Of(PlanChange.Added).Select(d => d.ConfigId));
        Assert.Equal(new[] { "b" }, diff.Of(PlanChange.Dropped).Select(d => d.ConfigId));
        var carried = Assert.Single(diff.Of(PlanChange.CarriedOver));
        Assert.Equal(("a", 300.0, 240.0, "1 of 2 levels running"), (carried.ConfigId, carried.OldCost, carried.NewCost, carried.Why));
        Assert.Equal(new[] { "c" }, diff.Of(PlanChange.Kept).Select(d => d.ConfigId));
        Assert.Equal(new[] { PlanChange.Added, PlanChange.Dropped, PlanChange.CarriedOver, PlanChange.Kept }, diff.Differences.Select(d => d.Change));

        // Worked by hand: box 350 -> 240, big 70 -> 100; in all 420 -> 340.
        Assert.Equal(new[] { ("big", 70.0, 100.0), ("box", 350.0, 240.0) }, diff.ByCluster.Select(c => (c.Cluster, c.OldCost, c.NewCost)));
        Assert.Equal((420.0, 340.0), (diff.OldCost, diff.NewCost));
    }

    [Fact]
    public void A_plan_compared_with_itself_has_no_change()
    {
        var plan = Plan(1, new[] { Entry("a", 1, 100), Entry("b", 1, 50) });
        var diff = PlanComparison.Between(plan, plan);
        Assert.All(diff.Differences, d => Assert.Equal(PlanChange.Kept, d.Change));
        Assert.Equal(diff.OldCost, diff.NewCost);
    }
}
