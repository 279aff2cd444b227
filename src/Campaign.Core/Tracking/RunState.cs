namespace Campaign.Core.Tracking;

/// <summary>States of a tracked run (one configuration at one level). Diagram in docs/tracking.md.</summary>
public enum RunState
{
    /// <summary>Needs its next leg (or its first).</summary>
    Planned,

    /// <summary>Needs its next leg, but the allocation cannot cover its worst case yet.</summary>
    WaitingBudget,

    /// <summary>A leg is submitted and waiting in the queue.</summary>
    Queued,

    /// <summary>A leg is running.</summary>
    Running,

    /// <summary>Reached its target length (or its done marker): done.</summary>
    Finished,

    /// <summary>Stopped for a human to look at, with a reason (stall, growing constraint norm, repeated failures...).</summary>
    Held,

    /// <summary>Given up (by a human, or a permanent batch-system error).</summary>
    Failed,
}

/// <summary>Questions about <see cref="RunState"/>.</summary>
public static class RunStates
{
    /// <summary>True while the tracker works on the run.</summary>
    public static bool IsActive(this RunState state) => state is RunState.Planned or RunState.WaitingBudget or RunState.Queued or RunState.Running;

    /// <summary>The name stored and shown: snake_case.</summary>
    public static string Name(this RunState state) => state switch
    {
        RunState.WaitingBudget => "waiting_budget",
        _ => state.ToString().ToLowerInvariant(),
    };

    /// <summary>Parses a stored name.</summary>
    public static RunState Parse(string name) => name == "waiting_budget" ? RunState.WaitingBudget : Enum.Parse<RunState>(name, ignoreCase: true);
}
