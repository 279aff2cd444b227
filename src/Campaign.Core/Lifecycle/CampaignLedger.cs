using System.Globalization;
using Campaign.Core.Domain;

namespace Campaign.Core.Lifecycle;

/// <summary>The answer of the budget rule for one leg.</summary>
/// <param name="Allowed">True when the leg may be submitted.</param>
/// <param name="Why">Why not (empty when allowed).</param>
public readonly record struct BudgetVerdict(bool Allowed, string Why);

/// <summary>
/// The campaign's spending against its allocations: what was spent (charged by ended legs, by the day they
/// ended), what is committed (open legs at their worst case) and what is left, per allocation and window. One
/// implementation of the rule "spent + committed + the next leg's worst case within the allocation (less the
/// reserve) and within the current window", used by the reconcile cycle, the forecast and select.
/// </summary>
public sealed class CampaignLedger
{
    private readonly IReadOnlyList<Allocation> _allocations;
    private readonly IReadOnlyDictionary<string, ClusterProfile> _clusters;
    private readonly ILookup<string, (DateOnly Day, double CoreHours)> _spent;
    private readonly Dictionary<string, double> _committed;

    /// <summary>Builds the ledger from the allocations and every leg's charge.</summary>
    public CampaignLedger(IReadOnlyList<Allocation> allocations, IReadOnlyDictionary<string, ClusterProfile> clusters, IEnumerable<LegCharge> legs)
    {
        _allocations = allocations;
        _clusters = clusters;
        var list = legs as IReadOnlyCollection<LegCharge> ?? legs.ToList();
        _spent = list.Where(s => !s.IsOpen && s.EndedAt is not null)
            .ToLookup(s => s.Cluster, s => (DateOnly.FromDateTime(s.EndedAt!.Value.UtcDateTime), s.Charged ?? 0), StringComparer.Ordinal);
        _committed = list.Where(s => s.IsOpen).GroupBy(s => s.Cluster, StringComparer.Ordinal).ToDictionary(g => g.Key, g => g.Sum(s => s.WorstCase), StringComparer.Ordinal);
    }

    /// <summary>Charged core-hours of legs on <paramref name="cluster"/> that ended between the two days (inclusive).</summary>
    public double Spent(string cluster, DateOnly from, DateOnly to) =>
        _spent[cluster].Where(c => c.Day >= from && c.Day <= to).Sum(c => c.CoreHours);

    /// <summary>Charged core-hours of every ended leg on <paramref name="cluster"/>.</summary>
    public double SpentAll(string cluster) => _spent[cluster].Sum(c => c.CoreHours);

    /// <summary>Worst-case charge of the open legs on <paramref name="cluster"/>.</summary>
    public double Committed(string cluster) => _committed.GetValueOrDefault(cluster);

    /// <summary>Adds a newly submitted leg's worst case to what is committed.</summary>
    public void Commit(string cluster, double worstCase) => _committed[cluster] = Committed(cluster) + worstCase;

    /// <summary>The allocations of <paramref name="cluster"/>.</summary>
    public IReadOnlyList<Allocation> AllocationsOf(string cluster) => _allocations.Where(a => a.Cluster == cluster).ToList();

    /// <summary>The allocation of <paramref name="cluster"/> that covers <paramref name="day"/>, or null.</summary>
    public Allocation? Current(string cluster, DateOnly day) => _allocations.FirstOrDefault(a => a.Cluster == cluster && a.Start <= day && day <= a.End);

    /// <summary>The allocation in force on <paramref name="day"/> or, if none, the next one to start; null when there is none.</summary>
    public Allocation? CurrentOrNext(string cluster, DateOnly day) =>
        _allocations.Where(a => a.Cluster == cluster && a.End >= day).OrderBy(a => a.Start).FirstOrDefault();

    /// <summary>Charged core-hours spent within <paramref name="allocation"/>'s period.</summary>
    public double SpentIn(Allocation allocation) => Spent(allocation.Cluster, allocation.Start, allocation.End);

    /// <summary>
    /// Charged core-hours spent on <paramref name="cluster"/> within any of its allocations' periods (what a
    /// re-plan takes off the cluster's budget).
    /// </summary>
    public double SpentInAllocations(string cluster) => AllocationsOf(cluster).Sum(SpentIn);

    /// <summary>
    /// The budget rule for a leg that may charge <paramref name="worstCase"/> on <paramref name="cluster"/>
    /// today. A cluster without allocations is not guarded (a workstation).
    /// </summary>
    public BudgetVerdict Allows(string cluster, double worstCase, DateOnly today, double reserve)
    {
        if (AllocationsOf(cluster).Count == 0)
        {
            return new BudgetVerdict(true, "");
        }

        var current = Current(cluster, today);
        if (current is null)
        {
            return new BudgetVerdict(false, $"waiting for budget: no allocation on {cluster} covers {today.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture)}");
        }

        var profile = _clusters[cluster];
        var granted = current.CoreHours(profile);
        var left = granted - reserve - SpentIn(current) - Committed(cluster);
        if (worstCase > left)
        {
            return new BudgetVerdict(false, $"waiting for budget: the next leg may charge {Show(worstCase)} core-hours; {Show(Math.Max(0, left))} left on {cluster} (allocation {Show(granted)}, reserve {Show(reserve)})");
        }

        var window = current.Windows.FirstOrDefault(w => w.Start <= today && today <= w.End);
        if (window is not null)
        {
            var amount = current.Unit == AllocationUnit.CoreHours ? window.Amount : window.Amount * profile.CoresPerNode;
            var windowLeft = amount - Spent(cluster, window.Start, window.End) - Committed(cluster);
            if (worstCase > windowLeft)
            {
                return new BudgetVerdict(false, $"waiting for budget: the next leg may charge {Show(worstCase)} core-hours; {Show(Math.Max(0, windowLeft))} left in the window {window.Start.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture)}..{window.End.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture)} on {cluster}");
            }
        }

        return new BudgetVerdict(true, "");
    }

    private static string Show(double value) => Math.Round(value).ToString("N0", CultureInfo.InvariantCulture);
}
