namespace Campaign.Core.Lifecycle;

/// <summary>What happened to one configuration between two plan versions.</summary>
public enum PlanChange
{
    /// <summary>In the newer version only.</summary>
    Added,

    /// <summary>In the older version only.</summary>
    Dropped,

    /// <summary>In both, carried into the newer one because it had started.</summary>
    CarriedOver,

    /// <summary>In both, chosen again.</summary>
    Kept,
}

/// <summary>One configuration's line in a comparison of two plan versions.</summary>
/// <param name="ConfigId">Configuration id.</param>
/// <param name="Change">What happened to it.</param>
/// <param name="Cluster">Its cluster in the newer version (the older one's when dropped).</param>
/// <param name="OldCost">Its cost in the older version (all its rows at that plan's quantile), 0 when added.</param>
/// <param name="NewCost">Its cost in the newer version, 0 when dropped.</param>
/// <param name="Why">For a carried configuration, what had happened to it.</param>
public sealed record PlanDifference(string ConfigId, PlanChange Change, string Cluster, double OldCost, double NewCost, string Why);

/// <summary>The cost of one cluster's share of each version.</summary>
/// <param name="Cluster">Cluster.</param>
/// <param name="OldCost">Its cost in the older version.</param>
/// <param name="NewCost">Its cost in the newer version.</param>
public sealed record ClusterCostChange(string Cluster, double OldCost, double NewCost);

/// <summary>
/// Two plan versions compared configuration by configuration: added, dropped, carried over (started runs a re-plan
/// kept), kept, and the cost change per cluster and in all. Costs are each plan's own rows at its own quantile.
/// </summary>
/// <param name="Older">The older version.</param>
/// <param name="Newer">The newer version.</param>
/// <param name="Differences">Every configuration of either, added first, then dropped, carried over and kept.</param>
/// <param name="ByCluster">Cost per cluster in each.</param>
public sealed record PlanComparison(PlanVersion Older, PlanVersion Newer, IReadOnlyList<PlanDifference> Differences, IReadOnlyList<ClusterCostChange> ByCluster)
{
    /// <summary>Total cost of the older version.</summary>
    public double OldCost => ByCluster.Sum(c => c.OldCost);

    /// <summary>Total cost of the newer version.</summary>
    public double NewCost => ByCluster.Sum(c => c.NewCost);

    /// <summary>The configurations with <paramref name="change"/>.</summary>
    public IReadOnlyList<PlanDifference> Of(PlanChange change) => Differences.Where(d => d.Change == change).ToList();

    /// <summary>Compares <paramref name="older"/> with <paramref name="newer"/>.</summary>
    public static PlanComparison Between(PlanVersion older, PlanVersion newer)
    {
        static Dictionary<string, (string Cluster, double Cost)> ByConfig(PlanVersion plan) =>
            plan.Entries.GroupBy(e => e.ConfigId, StringComparer.Ordinal)
                .ToDictionary(g => g.Key, g => (g.First().Cluster, g.Sum(e => e.Cost)), StringComparer.Ordinal);

        var before = ByConfig(older);
        var after = ByConfig(newer);
        var carried = newer.Carried.ToDictionary(c => c.ConfigId, StringComparer.Ordinal);
        var differences = new List<PlanDifference>();
        foreach (var (id, now) in after.OrderBy(p => p.Key, StringComparer.Ordinal))
        {
            if (!before.TryGetValue(id, out var then))
            {
                differences.Add(new PlanDifference(id, PlanChange.Added, now.Cluster, 0, now.Cost, ""));
            }
            else
            {
                var change = carried.TryGetValue(id, out var kept) ? PlanChange.CarriedOver : PlanChange.Kept;
                differences.Add(new PlanDifference(id, change, now.Cluster, then.Cost, now.Cost, kept?.Why ?? ""));
            }
        }

        foreach (var (id, then) in before.Where(p => !after.ContainsKey(p.Key)).OrderBy(p => p.Key, StringComparer.Ordinal))
        {
            differences.Add(new PlanDifference(id, PlanChange.Dropped, then.Cluster, then.Cost, 0, ""));
        }

        var clusters = older.Entries.Concat(newer.Entries).Select(e => e.Cluster).Distinct(StringComparer.Ordinal).Order(StringComparer.Ordinal);
        var byCluster = clusters.Select(c => new ClusterCostChange(
            c,
            older.Entries.Where(e => e.Cluster == c).Sum(e => e.Cost),
            newer.Entries.Where(e => e.Cluster == c).Sum(e => e.Cost))).ToList();
        return new PlanComparison(older, newer, differences.OrderBy(d => d.Change).ToList(), byCluster);
    }
}
