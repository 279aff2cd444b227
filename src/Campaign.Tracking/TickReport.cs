namespace Campaign.Tracking;

/// <summary>What one reconcile cycle did; <c>Unreachable</c> lists the clusters skipped this cycle because their batch system failed.</summary>
public sealed record TickReport(
    int Submitted,
    int Ended,
    int Finished,
    int Held,
    int WaitingBudget,
    int Active,
    IReadOnlyDictionary<string, int> QueriesPerCluster,
    IReadOnlyList<string> Messages,
    IReadOnlyList<string>? Unreachable = null);
