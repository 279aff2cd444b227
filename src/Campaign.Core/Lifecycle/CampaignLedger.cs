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
    private readonly IReadOnlyDictionary<string, MachineProfile> _machines;
    private readonly ILookup<string, (DateOnly Day, double CoreHours)> _spent;
    private readonly Dictionary<string, double> _committed;

    /// <summary>Builds the ledger from the allocations and every leg's charge.</summary>
    public CampaignLedger(IReadOnlyList<Allocation> allocations, IReadOnlyDictionary<string, MachineProfile> machines, IEnumerable<LegCharge> legs)
    {
        _allocations = allocations;
        _machines = machines;
        var list = legs as IReadOnlyCollection<LegCharge> ?? legs.ToList();
        _spent = list.Where(s => !s.IsOpen && s.EndedAt is not null)
            .ToLookup(s => s.Machine, s => (DateOnly.FromDateTime(s.EndedAt!.Value.UtcDateTime), s.Charged ?? 0), StringComparer.Ordinal);
        _committed = list.Where(s => s.IsOpen).GroupBy(s => s.Machine, StringComparer.Ordinal).ToDictionary(g => g.Key, g => g.Sum(s => s.WorstCase), StringComparer.Ordinal);
    }

    /// <summary>Charged core-hours of legs on <paramref name="machine"/> that ended between the two days (inclusive).</summary>
    public double Spent(string machine, DateOnly from, DateOnly to) =>
        _spent[machine].Where(c => c.Day >= from && c.Day <= to).Sum(c => c.CoreHours);

    /// <summary>Charged core-hours of every ended leg on <paramref name="machine"/>.</summary>
    public double SpentAll(string machine) => _spent[machine].Sum(c => c.CoreHours);

    /// <summary>Worst-case charge of the open legs on <paramref name="machine"/>.</summary>
    public double Committed(string machine) => _committed.GetValueOrDefault(machine);

    /// <summary>Adds a newly submitted leg's worst case to what is committed.</summary>
    public void Commit(string machine, double worstCase) => _committed[machine] = Committed(machine) + worstCase;

    /// <summary>The allocations of <paramref name="machine"/>.</summary>
    public IReadOnlyList<Allocation> AllocationsOf(string machine) => _allocations.Where(a => a.Machine == machine).ToList();

    /// <summary>The allocation of <paramref name="machine"/> that covers <paramref name="day"/>, or null.</summary>
    public Allocation? Current(string machine, DateOnly day) => _allocations.FirstOrDefault(a => a.Machine == machine && a.Start <= day && day <= a.End);

    /// <summary>The allocation in force on <paramref name="day"/> or, if none, the next one to start; null when there is none.</summary>
    public Allocation? CurrentOrNext(string machine, DateOnly day) =>
        _allocations.Where(a => a.Machine == machine && a.End >= day).OrderBy(a => a.Start).FirstOrDefault();

    /// <summary>Charged core-hours spent within <paramref name="allocation"/>'s period.</summary>
    public double SpentIn(Allocation allocation) => Spent(allocation.Machine, allocation.Start, allocation.End);

    /// <summary>
    /// Charged core-hours spent on <paramref name="machine"/> within any of its allocations' periods (what a
    /// re-plan takes off the machine's budget).
    /// </summary>
    public double SpentInAllocations(string machine) => AllocationsOf(machine).Sum(SpentIn);

    /// <summary>
    /// The budget rule for a leg that may charge <paramref name="worstCase"/> on <paramref name="machine"/>
    /// today. A machine without allocations is not guarded (a workstation).
    /// </summary>
    public BudgetVerdict Allows(string machine, double worstCase, DateOnly today, double reserve)
    {
        if (AllocationsOf(machine).Count == 0)
        {
            return new BudgetVerdict(true, "");
        }

        var current = Current(machine, today);
        if (current is null)
        {
            return new BudgetVerdict(false, $"waiting for budget: no allocation on {machine} covers {today.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture)}");
        }

        var profile = _machines[machine];
        var granted = current.CoreHours(profile);
        var left = granted - reserve - SpentIn(current) - Committed(machine);
        if (worstCase > left)
        {
            return new BudgetVerdict(false, $"waiting for budget: the next leg may charge {Show(worstCase)} core-hours; {Show(Math.Max(0, left))} left on {machine} (allocation {Show(granted)}, reserve {Show(reserve)})");
        }

        var window = current.Windows.FirstOrDefault(w => w.Start <= today && today <= w.End);
        if (window is not null)
        {
            var amount = current.Unit == AllocationUnit.CoreHours ? window.Amount : window.Amount * profile.CoresPerNode;
            var windowLeft = amount - Spent(machine, window.Start, window.End) - Committed(machine);
            if (worstCase > windowLeft)
            {
                return new BudgetVerdict(false, $"waiting for budget: the next leg may charge {Show(worstCase)} core-hours; {Show(Math.Max(0, windowLeft))} left in the window {window.Start.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture)}..{window.End.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture)} on {machine}");
            }
        }

        return new BudgetVerdict(true, "");
    }

    private static string Show(double value) => Math.Round(value).ToString("N0", CultureInfo.InvariantCulture);
}
