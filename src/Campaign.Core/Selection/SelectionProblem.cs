namespace Campaign.Core.Selection;

/// <summary>One way to run a candidate: on a budget pool (a cluster's allocation, or one shared budget) at a cost.</summary>
/// <param name="Pool">Index of the budget pool.</param>
/// <param name="Cluster">Cluster the candidate would run on.</param>
/// <param name="Cost">Cost charged against the pool (at the chosen quantile).</param>
/// <param name="Median">Median cost, for reporting.</param>
/// <param name="High">Upper cost, for reporting.</param>
public sealed record SelectionOption(int Pool, string Cluster, double Cost, double Median, double High);

/// <summary>A configuration that may be chosen (with all its levels).</summary>
/// <param name="Id">Identifier.</param>
/// <param name="Coordinates">Scaled coordinates in parameter space (for coverage).</param>
/// <param name="Value">Value weight (the value objective; the demand weight of coverage).</param>
/// <param name="Must">Always taken.</param>
/// <param name="Options">Where it may run and at what cost; at least one.</param>
public sealed record SelectionCandidate(string Id, double[] Coordinates, double Value, bool Must, IReadOnlyList<SelectionOption> Options);

/// <summary>A budget: a cluster's allocation, or the one budget given on the command line.</summary>
public sealed record BudgetPool(string Name, double Capacity);

/// <summary>Which objective to maximise.</summary>
public enum SelectionObjective
{
    /// <summary>Facility-location coverage of the candidates (with existing runs).</summary>
    Coverage,

    /// <summary>Sum of the value column (0/1 knapsack).</summary>
    Value,
}

/// <summary>A selection problem: candidates, existing coverage, budgets and limits.</summary>
/// <param name="Candidates">Candidates (excluded ones already removed).</param>
/// <param name="Existing">Scaled coordinates of runs the group already has.</param>
/// <param name="Pools">Budget pools.</param>
/// <param name="MaxRuns">Most configurations to choose (null: no limit).</param>
/// <param name="Objective">What to maximise.</param>
public sealed record SelectionProblem(IReadOnlyList<SelectionCandidate> Candidates, IReadOnlyList<double[]> Existing, IReadOnlyList<BudgetPool> Pools, int? MaxRuns, SelectionObjective Objective);

/// <summary>A chosen candidate and where it runs.</summary>
/// <param name="Candidate">Index into the problem's candidates.</param>
/// <param name="Option">Index into that candidate's options.</param>
public readonly record struct Assignment(int Candidate, int Option);

/// <summary>The selector's answer.</summary>
/// <param name="Chosen">Chosen candidates with their options, in the order they were chosen.</param>
/// <param name="Objective">Objective value of the chosen set.</param>
/// <param name="UpperBound">A proven upper bound on the optimum.</param>
/// <param name="Method">Which algorithm produced it.</param>
/// <param name="Guarantee">The proven worst-case ratio of the method (1 for exact), as stated in docs/selection.md.</param>
public sealed record SelectionResult(IReadOnlyList<Assignment> Chosen, double Objective, double UpperBound, string Method, double Guarantee)
{
    /// <summary>(upper bound - objective) / upper bound; 0 when proven optimal.</summary>
    public double Gap => UpperBound <= 0 ? 0 : Math.Max(0, (UpperBound - Objective) / UpperBound);
}
