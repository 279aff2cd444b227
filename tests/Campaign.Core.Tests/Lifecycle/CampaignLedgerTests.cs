using Campaign.Core.Domain;
using Campaign.Core.Lifecycle;

namespace Campaign.Core.Tests.Lifecycle;

/// <summary>The one budget rule of the cycle, the forecast and select (hand-computed sums; no outside source needed).</summary>
public class CampaignLedgerTests
{
    private static readonly ClusterProfile Box = new("box", "", BatchSystemKind.Slurm, 64, 256, 24, true, 1, 1, 30, 10, 2, 12);
    private static readonly ClusterProfile Desk = Box with { Name = "desk", BatchSystem = BatchSystemKind.Local };

    private static readonly Allocation Year = new("box", 10_000, AllocationUnit.CoreHours, new DateOnly(2027, 1, 1), new DateOnly(2027, 12, 31), new[]
    {
        new AllocationWindow(new DateOnly(2027, 1, 1), new DateOnly(2027, 3, 31), 2_500),
        new AllocationWindow(new DateOnly(2027, 4, 1), new DateOnly(2027, 6, 30), 2_500),
    });

    private static LegCharge Ended(string cluster, int month, double charged) =>
        new("r", cluster, LegPhase.Ended, 999, charged, new DateTimeOffset(2027, month, 2, 0, 0, 0, TimeSpan.Zero), null, new DateTimeOffset(2027, month, 3, 0, 0, 0, TimeSpan.Zero));

    private static LegCharge Open(string cluster, double worst) =>
        new("r", cluster, LegPhase.Submitted, worst, null, new DateTimeOffset(2027, 2, 1, 0, 0, 0, TimeSpan.Zero), null, null);

    private static CampaignLedger Ledger(params LegCharge[] legs) =>
        new(new[] { Year }, new Dictionary<string, ClusterProfile> { ["box"] = Box, ["desk"] = Desk }, legs);

    [Fact]
    public void Spent_is_charged_by_the_day_legs_end_and_committed_is_the_open_worst_case()
    {
        var ledger = Ledger(Ended("box", 1, 100), Ended("box", 2, 200), Ended("box", 5, 400), Ended("desk", 1, 7), Open("box", 50), Open("box", 25));
        Assert.Equal(300, ledger.Spent("box", new DateOnly(2027, 1, 1), new DateOnly(2027, 3, 31)));
        Assert.Equal(700, ledger.SpentIn(Year));
        Assert.Equal(700, ledger.SpentInAllocations("box"));
        Assert.Equal(707, ledger.SpentAll("box") + ledger.SpentAll("desk"));
        Assert.Equal(75, ledger.Committed("box"));
        ledger.Commit("box", 5);
        Assert.Equal(80, ledger.Committed("box"));
    }

    [Fact]
    public void A_leg_fits_only_within_the_allocation_less_the_reserve_and_within_the_current_window()
    {
        var ledger = Ledger(Ended("box", 1, 2_000), Open("box", 300));
        var february = new DateOnly(2027, 2, 10);
        // Window Q1: 2,500 - 2,000 spent - 300 committed = 200 left.
        Assert.True(ledger.Allows("box", 200, february, reserve: 0).Allowed);
        var refused = ledger.Allows("box", 201, february, reserve: 0);
        Assert.False(refused.Allowed);
        Assert.Equal("waiting for budget: the next leg may charge 201 core-hours; 200 left in the window 2027-01-01..2027-03-31 on box", refused.Why);
        // The allocation: 10,000 - 2,000 - 300 - reserve 7,600 = 100 left.
        Assert.Equal("waiting for budget: the next leg may charge 150 core-hours; 100 left on box (allocation 10,000, reserve 7,600)", ledger.Allows("box", 150, february, reserve: 7_600).Why);
        // In Q2 the window starts afresh.
        Assert.True(ledger.Allows("box", 2_000, new DateOnly(2027, 4, 2), reserve: 0).Allowed);
    }

    [Fact]
    public void A_cluster_without_allocations_is_not_guarded_and_a_day_outside_every_allocation_waits()
    {
        var ledger = Ledger();
        Assert.True(ledger.Allows("desk", 1e9, new DateOnly(2027, 2, 1), 0).Allowed);
        var before = ledger.Allows("box", 1, new DateOnly(2026, 12, 1), 0);
        Assert.False(before.Allowed);
        Assert.Equal("waiting for budget: no allocation on box covers 2026-12-01", before.Why);
        Assert.Equal(Year, ledger.CurrentOrNext("box", new DateOnly(2026, 12, 1)));
        Assert.Null(ledger.CurrentOrNext("box", new DateOnly(2028, 1, 1)));
    }
}
