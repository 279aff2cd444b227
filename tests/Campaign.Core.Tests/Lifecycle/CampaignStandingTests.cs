using Campaign.Core.CostModel;
using Campaign.Core.Domain;
using Campaign.Core.Lifecycle;
using Campaign.Core.Tracking;

namespace Campaign.Core.Tests.Lifecycle;

/// <summary>Where plan runs stand is derived from the tracked runs; a rehearsal never stands in for a plan run.</summary>
public class CampaignStandingTests
{
    private static readonly BinaryConfiguration Binary = Some.Binary;

    private static PlanEntry Entry(string config, int level, double cost) => Some.Entry(config, level, cost);

    private static RunRecord Run(string id, RunState state, double progress = 0, bool rehearsal = false, string cluster = "box") =>
        new(id, id.Split('.')[0], int.Parse(id.Split('.')[1][3..], System.Globalization.CultureInfo.InvariantCulture), cluster, 64, Binary, 1000, state, "", rehearsal, progress, null);

    private static PlanVersion Plan(params PlanEntry[] entries) =>
        new(1, DateTimeOffset.UnixEpoch, "coverage", 0.5, 1, 1, "m", "c.csv", entries, Array.Empty<CarriedConfiguration>(), new Dictionary<string, double>());

    [Fact]
    public void Each_plan_run_is_to_come_active_held_finished_or_given_up_by_its_real_run_only()
    {
        var plan = Plan(Entry("a", 1, 100), Entry("a", 2, 200), Entry("b", 1, 50), Entry("c", 1, 10), Entry("d", 1, 10));
        var runs = new[]
        {
            Run("a.res1", RunState.Running, progress: 250),
            Run("a.res2.r1", RunState.Finished, progress: 1000, rehearsal: true),
            Run("b.res1", RunState.Finished, progress: 1000),
            Run("c.res1", RunState.Held, progress: 500),
            Run("d.res1", RunState.Failed),
            Run("x.res1", RunState.Queued),
        };
        var standing = CampaignStanding.Of(plan, runs);
        var status = standing.Runs.ToDictionary(s => s.Entry.RunId, s => s.Status);
        Assert.Equal(PlanRunStatus.Active, status["a.res1"]);
        Assert.Equal(PlanRunStatus.ToCome, status["a.res2"]); // its rehearsal finished; the real run is still to come
        Assert.Equal(PlanRunStatus.Finished, status["b.res1"]);
        Assert.Equal(PlanRunStatus.Held, status["c.res1"]);
        Assert.Equal(PlanRunStatus.Abandoned, status["d.res1"]);
        Assert.Equal(new[] { "a.res1", "a.res2", "c.res1" }, standing.Left.Select(s => s.Entry.RunId));
        Assert.Equal("x.res1", Assert.Single(standing.OutsidePlan).RunId);
        Assert.Equal("a.res2.r1", Assert.Single(standing.Rehearsals).RunId);
    }

    [Fact]
    public void A_replan_carries_every_started_configuration_with_what_it_still_needs()
    {
        var plan = Plan(Entry("a", 1, 100), Entry("a", 2, 200), Entry("b", 1, 50), Entry("d", 1, 10), Entry("e", 1, 40));
        var runs = new[]
        {
            Run("a.res1", RunState.Running, progress: 250, cluster: "desk"),
            Run("b.res1", RunState.Finished, progress: 1000),
            Run("d.res1", RunState.Failed),
            Run("e.res1.r1", RunState.Finished, progress: 1000, rehearsal: true),
        };
        var standing = CampaignStanding.Of(plan, runs);
        var carried = standing.Started().ToDictionary(c => c.ConfigId);
        Assert.Equal(new[] { "a", "b" }, carried.Keys.Order(StringComparer.Ordinal));
        // a: level 1 is a quarter done (75 of 100 left), level 2 is still to come (200).
        Assert.Equal(275, carried["a"].RemainingCost, 9);
        Assert.Equal("desk", carried["a"].Cluster);
        Assert.Equal("1 to come, 1 active", carried["a"].Why);
        Assert.Equal(0, carried["b"].RemainingCost);
        var remaining = standing.RemainingOf(new[] { "a" });
        Assert.Equal(75, remaining["desk"], 9);
        Assert.Equal(200, remaining["box"], 9);
    }
}
