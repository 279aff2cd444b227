using Campaign.Batch;
using Campaign.Batch.Local;
using Campaign.Batch.Resilience;
using Campaign.Store;
using Campaign.Tracking;

namespace Campaign.App.Runs;

/// <summary>
/// How the run services reach the batch systems: the real adapters (local runner, Slurm, PBS, each inside the
/// retry decorator), or systems given by the host (an in-memory batch system in the lifecycle tests).
/// </summary>
public sealed class BatchAccess
{
    private readonly Func<string, IReadOnlyDictionary<string, Core.Domain.ClusterProfile>, TimeProvider, IReadOnlyDictionary<string, ClusterLink>> _create;

    private BatchAccess(Func<string, IReadOnlyDictionary<string, Core.Domain.ClusterProfile>, TimeProvider, IReadOnlyDictionary<string, ClusterLink>> create, IReadOnlyDictionary<string, string> jobEnvironment)
    {
        _create = create;
        JobEnvironment = jobEnvironment;
    }

    /// <summary>Environment added to every job (how the batch script finds the campaign executable).</summary>
    public IReadOnlyDictionary<string, string> JobEnvironment { get; }

    /// <summary>The real adapters; <paramref name="inside"/> wraps each inside the decorator (fault injection in tests).</summary>
    public static BatchAccess Real(SupervisorCommand supervisor, IReadOnlyDictionary<string, string> jobEnvironment, RetryOptions? retry = null, Func<string, IBatchSystem, IBatchSystem>? inside = null) =>
        new((root, clusters, time) => BatchSystemFactory.Links(root, clusters, supervisor, retry ?? RetryOptions.Default, time, inside), jobEnvironment);

    /// <summary>Systems the host gives, one per cluster name.</summary>
    public static BatchAccess Given(Func<string, IBatchSystem> systemFor, IReadOnlyDictionary<string, string>? jobEnvironment = null) =>
        new((root, clusters, _) => clusters.Keys.ToDictionary(m => m, m => ClusterLink.Local(systemFor(m), root), StringComparer.Ordinal), jobEnvironment ?? new Dictionary<string, string>());

    /// <summary>How the clusters of an open workspace are reached (batch system, run-folder site, ssh).</summary>
    internal IReadOnlyDictionary<string, ClusterLink> For(Workspace workspace, TimeProvider time) => _create(workspace.Root, workspace.Clusters, time);
}
