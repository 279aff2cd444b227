namespace Campaign.Core.Domain;

/// <summary>
/// A configuration the group might run: its run specification, the cluster it would run on, and the
/// selection attributes (value weight, must-run, a user-supplied cost overriding the model).
/// </summary>
/// <param name="Id">Identifier from the candidate file.</param>
/// <param name="Spec">Physics, levels and cores.</param>
/// <param name="Cluster">Preferred cluster (the first of the file's cluster column).</param>
/// <param name="Value">Priority weight, default 1.</param>
/// <param name="Must">True when the configuration must be run.</param>
/// <param name="CoreHours">User-supplied cost of the whole configuration (all levels), overriding the model.</param>
/// <param name="Clusters">Every cluster the configuration may run on (the cluster column, separated by ';'); the first is <paramref name="Cluster"/>.</param>
public sealed record Candidate(string Id, RunSpec Spec, string Cluster, double Value, bool Must, double? CoreHours, IReadOnlyList<string> Clusters)
{
    /// <summary>A candidate allowed on one cluster only.</summary>
    public Candidate(string id, RunSpec spec, string cluster, double value, bool must, double? coreHours)
        : this(id, spec, cluster, value, must, coreHours, new[] { cluster })
    {
    }
}
