using Campaign.Core.CostModel;
using Campaign.Core.Domain;
using Campaign.Core.Lifecycle;

namespace Campaign.Core.Tests.Lifecycle;

/// <summary>Test data for the lifecycle tests: one binary, plan rows whose every cost is the one given.</summary>
internal static class Some
{
    public static readonly BinaryConfiguration Binary = new(MassRatio.From(2), Spin.Zero, Spin.Zero, 0.02);

    public static PlanEntry Entry(string config, int level, double cost, string cluster = "box") =>
        new(Binary, new EstimateRow(config, level, "run", cluster, 64, 1000, cost, cost, cost, cost, 10, 1, 10, cost, cost, 1, 1, "model", Array.Empty<string>(), 0.1, 30, 1), cost, 1000);
}
