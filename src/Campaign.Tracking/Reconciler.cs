using Campaign.Batch;
using Campaign.Core.Tracking;
using Campaign.Store;
using Campaign.Tracking.Cycle;

namespace Campaign.Tracking;

/// <summary>
/// One reconcile cycle over every tracked run, as small steps in order: once after a restore, find the jobs
/// submitted after the backup by name; recover intents (submissions a crash left
/// unconfirmed, looked up by job name), observe (one query per cluster), end and charge legs (finish, continue
/// from the newest valid checkpoint, hold), watch health (stalls, a growing constraint norm), submit within the
/// budget rule; then record which clusters were at fault and notify. Every state change is one SQLite transaction
/// with its event row. A cluster whose batch system fails is skipped for the rest of the cycle and its runs stay as
/// they were. The caller holds the <see cref="DaemonLock"/>.
/// </summary>
public sealed class Reconciler
{
    private readonly Workspace _workspace;
    private readonly IReadOnlyDictionary<string, ClusterLink> _links;
    private readonly TimeProvider _time;
    private readonly IReadOnlyDictionary<string, string> _jobEnvironment;

    /// <summary>Creates the reconciler over an open workspace, with one batch system per cluster.</summary>
    public Reconciler(Workspace workspace, IReadOnlyDictionary<string, IBatchSystem> batch, TimeProvider time, IReadOnlyDictionary<string, string>? jobEnvironment = null)
        : this(workspace, batch.ToDictionary(p => p.Key, p => ClusterLink.Local(p.Value, workspace.Root), StringComparer.Ordinal), time, jobEnvironment)
    {
    }

    /// <summary>Creates the reconciler over an open workspace, with one link (batch system and run-folder site) per cluster.</summary>
    public Reconciler(Workspace workspace, IReadOnlyDictionary<string, ClusterLink> links, TimeProvider time, IReadOnlyDictionary<string, string>? jobEnvironment = null)
    {
        _workspace = workspace;
        _links = links;
        _time = time;
        _jobEnvironment = jobEnvironment ?? new Dictionary<string, string>();
    }

    /// <summary>Runs one cycle.</summary>
    public async Task<TickReport> TickAsync(CancellationToken cancellationToken)
    {
        var c = new CycleContext(_workspace, _links, _time, _jobEnvironment);
        await RecoverAfterRestore.RunAsync(c, cancellationToken).ConfigureAwait(false);
        await RecoverIntents.RunAsync(c, cancellationToken).ConfigureAwait(false);
        await ObserveJobs.RunAsync(c, cancellationToken).ConfigureAwait(false);
        await WatchHealth.RunAsync(c, cancellationToken).ConfigureAwait(false);
        await SubmitLegs.RunAsync(c, cancellationToken).ConfigureAwait(false);
        Clusters.Record(c);

        var failures = await new Notifier(c.Settings.NotifyCommand, _workspace.Root).SendAsync(c.Notices, cancellationToken).ConfigureAwait(false);
        c.Messages.AddRange(failures);
        var runs = c.Runs.Values;
        return new TickReport(c.Submitted, c.Ended, c.Finished, c.Held, runs.Count(r => r.State == RunState.WaitingBudget), runs.Count(r => r.State.IsActive()), c.Queries, c.Messages.ToList(), c.Faults.Keys.Order(StringComparer.Ordinal).ToList());
    }
}
