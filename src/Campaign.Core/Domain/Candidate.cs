namespace Campaign.Core.Domain;

/// <summary>
/// A configuration the group might run: its run specification, the machine it would run on, and the
/// selection attributes (value weight, must-run, a user-supplied cost overriding the model).
/// </summary>
/// <param name="Id">Identifier from the candidate file.</param>
/// <param name="Spec">Physics, levels and cores.</param>
/// <param name="Machine">Preferred machine (the first of the file's cluster column).</param>
/// <param name="Value">Priority weight, default 1.</param>
/// <param name="Must">True when the configuration must be run.</param>
/// <param name="CoreHours">User-supplied cost of the whole configuration (all levels), overriding the model.</param>
/// <param name="Machines">Every machine the configuration may run on (the cluster column, separated by ';'); the first is <paramref name="Machine"/>.</param>
public sealed record Candidate(string Id, RunSpec Spec, string Machine, double Value, bool Must, double? CoreHours, IReadOnlyList<string> Machines)
{
    /// <summary>A candidate allowed on one machine only.</summary>
    public Candidate(string id, RunSpec spec, string machine, double value, bool must, double? coreHours)
        : this(id, spec, machine, value, must, coreHours, new[] { machine })
    {
    }
}
