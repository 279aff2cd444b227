namespace Campaign.Core.Domain;

/// <summary>
/// What Campaign needs to know about one cluster: its shape, its queue limits and how the site charges it.
/// Loaded from one TOML file per cluster (see docs/formats.md).
/// </summary>
/// <param name="Name">Short cluster name used everywhere else (lower case, digits, '-' or '_').</param>
/// <param name="Description">Free text for humans.</param>
/// <param name="BatchSystem">Which batch system runs the jobs.</param>
/// <param name="CoresPerNode">Cores in one node.</param>
/// <param name="MemoryPerNodeGb">Memory of one node in GB.</param>
/// <param name="WallLimitHours">Longest wall time one job may ask for.</param>
/// <param name="ChargeWholeNodes">True when the site charges whole nodes however many cores a job uses.</param>
/// <param name="ChargeFactor">Multiplier the site applies to elapsed x cores (queue or cluster factor).</param>
/// <param name="RelativeSpeed">Speed per core relative to the reference cluster (1 = reference; 2 = twice as fast).</param>
/// <param name="MaxJobsQueued">Most jobs one user may have queued (pending or running).</param>
/// <param name="MaxJobsRunning">Most jobs one user may have running.</param>
/// <param name="QueueWaitMedianHours">Typical wait in the queue before a job starts (median), hours.</param>
/// <param name="QueueWaitP90Hours">90th percentile of the queue wait, hours.</param>
/// <param name="Partition">Slurm partition or PBS queue to submit to; null for the site's default.</param>
/// <param name="Account">Project account charged; null for the user's default.</param>
/// <param name="Remote">How the cluster is reached over SSH; null for a cluster whose batch commands and run folders
/// are on the host the tracker runs on.</param>
public sealed record ClusterProfile(
    string Name,
    string Description,
    BatchSystemKind BatchSystem,
    int CoresPerNode,
    double MemoryPerNodeGb,
    double WallLimitHours,
    bool ChargeWholeNodes,
    double ChargeFactor,
    double RelativeSpeed,
    int MaxJobsQueued,
    int MaxJobsRunning,
    double QueueWaitMedianHours,
    double QueueWaitP90Hours,
    string? Partition = null,
    string? Account = null,
    RemoteAccess? Remote = null)
{
    /// <summary>The site shown in status and check: the remote site's name, or "this host".</summary>
    public string Site => Remote?.Site ?? "this host";

    /// <summary>Nodes a job of <paramref name="cores"/> cores occupies.</summary>
    public int NodesFor(int cores) => (cores + CoresPerNode - 1) / CoresPerNode;

    /// <summary>
    /// Core-hours the site charges for <paramref name="elapsedHours"/> of a job on <paramref name="cores"/> cores:
    /// elapsed x (cores, or whole nodes x cores per node when whole nodes are charged) x charge factor.
    /// </summary>
    public double ChargedCoreHours(int cores, double elapsedHours)
    {
        var chargedCores = ChargeWholeNodes ? (double)NodesFor(cores) * CoresPerNode : cores;
        return elapsedHours * chargedCores * ChargeFactor;
    }
}

/// <summary>
/// How a remote cluster is reached: through the system OpenSSH client, to a host name from the user's own OpenSSH
/// configuration (so jump hosts, user names, keys and certificates work as the user set them up).
/// </summary>
/// <param name="Host">The ssh destination: a Host name from the OpenSSH configuration (or user@host).</param>
/// <param name="RunRoot">Absolute folder on the remote site under which the run folders live.</param>
/// <param name="SshConfig">An OpenSSH configuration file to use instead of the user's own (~/.ssh/config); null for the user's.</param>
/// <param name="RequiresMaster">True for a site where the user opens a master connection by hand (multi-factor
/// login): the tracker never logs in by itself and waits for that connection.</param>
/// <param name="Site">Name of the site or centre, shown in status and check.</param>
public sealed record RemoteAccess(string Host, string RunRoot, string? SshConfig, bool RequiresMaster, string Site);
