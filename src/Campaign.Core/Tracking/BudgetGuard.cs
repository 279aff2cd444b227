namespace Campaign.Core.Tracking;

/// <summary>
/// The budget guard: a leg may be submitted only if, charged at its worst case (its whole wall time on all
/// its charged cores), used + committed + it stays within the allocation (and the current window) minus the
/// reserve.
/// </summary>
public static class BudgetGuard
{
    /// <summary>True when the leg fits; <paramref name="left"/> is what remains before it.</summary>
    public static bool Allows(double worstCase, double used, double committed, double allocation, double reserve, out double left)
    {
        left = allocation - reserve - used - committed;
        return worstCase <= left;
    }
}
