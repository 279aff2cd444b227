namespace Campaign.Core.Domain;

/// <summary>Unit an allocation is granted in.</summary>
public enum AllocationUnit
{
    /// <summary>Core-hours: elapsed hours x cores charged.</summary>
    CoreHours,

    /// <summary>Node-hours: elapsed hours x nodes charged.</summary>
    NodeHours,
}

/// <summary>A window inside an allocation (for example a quarter) with its own use-it-or-lose-it amount.</summary>
public sealed record AllocationWindow(DateOnly Start, DateOnly End, double Amount);

/// <summary>
/// Time granted on one cluster for a period, optionally split into windows. Amounts are in <see cref="Unit"/>;
/// the site's own accounting and policies rule over anything Campaign computes from them.
/// </summary>
public sealed record Allocation(string Cluster, double Amount, AllocationUnit Unit, DateOnly Start, DateOnly End, IReadOnlyList<AllocationWindow> Windows)
{
    /// <summary>The amount in core-hours, converting node-hours with the cluster's cores per node.</summary>
    public double CoreHours(ClusterProfile cluster) => Unit == AllocationUnit.CoreHours ? Amount : Amount * cluster.CoresPerNode;

    /// <summary>"core-hours" or "node-hours", as written in the config.</summary>
    public string UnitName => Unit == AllocationUnit.CoreHours ? "core-hours" : "node-hours";
}
