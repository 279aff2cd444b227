using Campaign.Batch;
using Campaign.Batch.Local;
using Campaign.Batch.Pbs;
using Campaign.Batch.Resilience;
using Campaign.Batch.Slurm;
using Campaign.Core.Domain;
using Campaign.Store;

namespace Campaign.Tracking;

/// <summary>One batch system per cluster of the workspace, each wrapped in the host's retry/timeout decorator.</summary>
public static class BatchSystemFactory
{
    /// <summary>
    /// Builds the adapters: local clusters get a local runner with its state in LOCAL-RUNNER/CLUSTER under the
    /// workspace and as many slots as the cluster's cores per node; Slurm and PBS clusters use their commands.
    /// </summary>
    /// <param name="workspace">The workspace whose clusters get adapters.</param>
    /// <param name="supervisor">How the local runner starts its job supervisors.</param>
    /// <param name="retry">The retry and timeout settings of the decorator.</param>
    /// <param name="time">The clock.</param>
    /// <param name="inside">Optional: wraps each adapter inside the decorator (fault injection in the reliability tests).</param>
    public static IReadOnlyDictionary<string, IBatchSystem> Create(Workspace workspace, SupervisorCommand supervisor, RetryOptions retry, TimeProvider time, Func<string, IBatchSystem, IBatchSystem>? inside = null) =>
        Create(workspace.Root, workspace.Clusters, supervisor, retry, time, inside);

    /// <summary>Builds the adapters for the clusters of the workspace in <paramref name="root"/>.</summary>
    /// <param name="root">The workspace folder (the local runner keeps its state under it).</param>
    /// <param name="clusters">The cluster profiles.</param>
    /// <param name="supervisor">How the local runner starts its job supervisors.</param>
    /// <param name="retry">The retry and timeout settings of the decorator.</param>
    /// <param name="time">The clock.</param>
    /// <param name="inside">Optional: wraps each adapter inside the decorator.</param>
    public static IReadOnlyDictionary<string, IBatchSystem> Create(string root, IReadOnlyDictionary<string, ClusterProfile> clusters, SupervisorCommand supervisor, RetryOptions retry, TimeProvider time, Func<string, IBatchSystem, IBatchSystem>? inside = null)
    {
        var systems = new Dictionary<string, IBatchSystem>(StringComparer.Ordinal);
        foreach (var cluster in clusters.Values)
        {
            IBatchSystem adapter = cluster.BatchSystem switch
            {
                BatchSystemKind.Local => new LocalBatchSystem(new LocalOptions(Path.Combine(root, "local-runner", cluster.Name), cluster.CoresPerNode, supervisor)),
                BatchSystemKind.Slurm => new SlurmBatchSystem(new SlurmOptions { Partition = cluster.Partition, Account = cluster.Account }),
                _ => new PbsBatchSystem(new PbsOptions { Queue = cluster.Partition, Account = cluster.Account }),
            };
            systems[cluster.Name] = new ResilientBatchSystem(inside is null ? adapter : inside(cluster.Name, adapter), retry, time);
        }

        return systems;
    }
}
