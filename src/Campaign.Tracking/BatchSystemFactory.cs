using Campaign.Batch;
using Campaign.Batch.Local;
using Campaign.Batch.Pbs;
using Campaign.Batch.Processes;
using Campaign.Batch.Remote;
using Campaign.Batch.Resilience;
using Campaign.Batch.Slurm;
using Campaign.Core.Domain;
using Campaign.Store;
using Campaign.Tracking.Sites;

namespace Campaign.Tracking;

/// <summary>
/// How the tracker reaches one cluster: its batch system (inside the host's retry and timeout decorator), where its
/// run folders live, and, for a cluster reached over SSH, the shell that reaches it.
/// </summary>
/// <param name="Batch">The batch system.</param>
/// <param name="Site">Where the cluster's run folders live.</param>
/// <param name="Ssh">The SSH shell of a remote cluster; null for a cluster on this host.</param>
public sealed record ClusterLink(IBatchSystem Batch, IRunSite Site, SshShell? Ssh = null)
{
    /// <summary>A cluster on this host, its run folders under the workspace in <paramref name="root"/>.</summary>
    public static ClusterLink Local(IBatchSystem batch, string root) => new(batch, new LocalRunSite(root));
}

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
        Links(workspace.Root, workspace.Clusters, supervisor, retry, time, inside).ToDictionary(p => p.Key, p => p.Value.Batch, StringComparer.Ordinal);

    /// <summary>The links of the workspace's clusters.</summary>
    public static IReadOnlyDictionary<string, ClusterLink> Links(Workspace workspace, SupervisorCommand supervisor, RetryOptions retry, TimeProvider time, Func<string, IBatchSystem, IBatchSystem>? inside = null) =>
        Links(workspace.Root, workspace.Clusters, supervisor, retry, time, inside);

    /// <summary>
    /// Builds the links for the clusters of the workspace in <paramref name="root"/>. A cluster with a login host is
    /// reached through ssh (its control socket in SSH/CLUSTER under the workspace): Slurm and PBS run their commands
    /// there, a local-runner cluster becomes a remote workstation (<see cref="WorkstationBatchSystem"/>), and its run
    /// folders live under the profile's run root.
    /// </summary>
    /// <param name="root">The workspace folder (the local runner keeps its state under it).</param>
    /// <param name="clusters">The cluster profiles.</param>
    /// <param name="supervisor">How the local runner starts its job supervisors.</param>
    /// <param name="retry">The retry and timeout settings of the decorator.</param>
    /// <param name="time">The clock.</param>
    /// <param name="inside">Optional: wraps each adapter inside the decorator.</param>
    public static IReadOnlyDictionary<string, ClusterLink> Links(string root, IReadOnlyDictionary<string, ClusterProfile> clusters, SupervisorCommand supervisor, RetryOptions retry, TimeProvider time, Func<string, IBatchSystem, IBatchSystem>? inside = null)
    {
        var links = new Dictionary<string, ClusterLink>(StringComparer.Ordinal);
        foreach (var cluster in clusters.Values)
        {
            var ssh = cluster.Remote is { } remote ? new SshShell(SshSettingsFor(root, cluster.Name, remote, retry)) : null;
            IShell shell = ssh is null ? new LocalShell() : ssh;
            IBatchSystem adapter = cluster.BatchSystem switch
            {
                BatchSystemKind.Local when ssh is not null => new WorkstationBatchSystem(ssh, cluster.Remote!.RunRoot + "/campaign-runner", cluster.CoresPerNode),
                BatchSystemKind.Local => new LocalBatchSystem(new LocalOptions(Path.Combine(root, "local-runner", cluster.Name), cluster.CoresPerNode, supervisor)),
                BatchSystemKind.Slurm => new SlurmBatchSystem(new SlurmOptions { Partition = cluster.Partition, Account = cluster.Account }, shell),
                _ => new PbsBatchSystem(new PbsOptions { Queue = cluster.Partition, Account = cluster.Account }, shell),
            };
            var batch = new ResilientBatchSystem(inside is null ? adapter : inside(cluster.Name, adapter), retry, time);
            IRunSite site = ssh is null ? new LocalRunSite(root) : new RemoteRunSite(ssh, cluster.Remote!.RunRoot);
            links[cluster.Name] = new ClusterLink(batch, site, ssh);
        }

        return links;
    }

    /// <summary>
    /// The ssh settings of a remote cluster: its control socket is SSH/CLUSTER in the workspace; where that path is
    /// too long for a socket (about 100 bytes with the suffix ssh adds), a short path in the user's runtime folder.
    /// </summary>
    public static SshSettings SshSettingsFor(string root, string cluster, RemoteAccess remote, RetryOptions retry)
    {
        var control = Path.Combine(Path.GetFullPath(root), "ssh", cluster);
        if (System.Text.Encoding.UTF8.GetByteCount(control) > 80)
        {
            var runtime = Environment.GetEnvironmentVariable("XDG_RUNTIME_DIR") is { Length: > 0 } r ? r : Path.GetTempPath();
            var hash = Convert.ToHexString(System.Security.Cryptography.SHA256.HashData(System.Text.Encoding.UTF8.GetBytes(control)))[..12].ToLowerInvariant();
            control = Path.Combine(runtime, "campaign-ssh-" + hash, cluster);
        }

        var connect = TimeSpan.FromSeconds(Math.Clamp(retry.CommandTimeout.TotalSeconds / 4, 5, 30));
        var config = remote.SshConfig switch
        {
            null => null,
            var c when c.StartsWith("~/", StringComparison.Ordinal) => Path.Combine(Environment.GetFolderPath(Environment.SpecialFolder.UserProfile), c[2..]),
            var c => Path.GetFullPath(c, Path.Combine(Path.GetFullPath(root), Workspace.ClustersFolderName)), // relative to the profiles
        };
        return new SshSettings(remote.Host, config, control, remote.RequiresMaster, connect);
    }
}
