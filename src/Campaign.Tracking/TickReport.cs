namespace Campaign.Tracking;

/// <summary>What one reconcile cycle did.</summary>
public sealed record TickReport(
    int Submitted,
    int Ended,
    int Finished,
    int Held,
    int WaitingBudget,
    int Active,
    IReadOnlyDictionary<string, int> QueriesPerMachine,
    IReadOnlyList<string> Messages);
