using System.Globalization;
using Campaign.Batch;
using Campaign.Core.Tracking;
using Campaign.Core.Lifecycle;
using Campaign.Store;
using Campaign.Tracking.Sites;
using Microsoft.Data.Sqlite;

namespace Campaign.Tracking.Cycle;

/// <summary>
/// What the steps of one reconcile cycle share: the workspace, the batch systems, the clock, the runs as loaded at
/// the start, and what the cycle has learnt (clusters at fault or answering, messages, notices, counts).
/// </summary>
internal sealed class CycleContext
{
    public CycleContext(Workspace workspace, IReadOnlyDictionary<string, ClusterLink> links, TimeProvider time, IReadOnlyDictionary<string, string> jobEnvironment)
    {
        Workspace = workspace;
        Links = links;
        Time = time;
        JobEnvironment = jobEnvironment;
        Runs = TrackingStore.Runs(workspace.Connection).ToDictionary(r => r.RunId, StringComparer.Ordinal);
    }

    public Workspace Workspace { get; }

    public IReadOnlyDictionary<string, ClusterLink> Links { get; }

    /// <summary>What this cycle read of run folders, by run id (one inspection per cluster).</summary>
    public Dictionary<string, FolderView> Views { get; } = new(StringComparer.Ordinal);

    /// <summary>Clusters whose run folders were read this cycle.</summary>
    public HashSet<string> Inspected { get; } = new(StringComparer.Ordinal);

    public TimeProvider Time { get; }

    public IReadOnlyDictionary<string, string> JobEnvironment { get; }

    public SqliteConnection Db => Workspace.Connection;

    public TrackingSettings Settings => Workspace.Config.Tracking;

    public DateTimeOffset Now => Time.GetUtcNow();

    /// <summary>Every tracked run, by id.</summary>
    public Dictionary<string, TrackedRun> Runs { get; }

    /// <summary>State changes to announce.</summary>
    public List<Notice> Notices { get; } = new();

    /// <summary>Lines for the cycle's report.</summary>
    public List<string> Messages { get; } = new();

    /// <summary>Batch-system queries made, per cluster.</summary>
    public Dictionary<string, int> Queries { get; } = new(StringComparer.Ordinal);

    /// <summary>Clusters whose batch system failed this cycle, with what failed.</summary>
    public Dictionary<string, string> Faults { get; } = new(StringComparer.Ordinal);

    /// <summary>Clusters whose batch system answered this cycle.</summary>
    public HashSet<string> Answered { get; } = new(StringComparer.Ordinal);

    public int Submitted { get; set; }

    public int Ended { get; set; }

    public int Finished { get; set; }

    public int Held { get; set; }

    public IBatchSystem Batch(string cluster) => Link(cluster).Batch;

    public ClusterLink Link(string cluster) =>
        Links.TryGetValue(cluster, out var link) ? link : throw new InvalidOperationException($"no batch system for cluster {cluster}");

    /// <summary>The run's folder on its cluster's site.</summary>
    public string FolderPath(TrackedRun run) => Link(run.Cluster).Site.PathOf(run.Folder);

    /// <summary>The run's folder as read this cycle (empty when it was not read).</summary>
    public FolderView Folder(TrackedRun run) => Views.TryGetValue(run.RunId, out var view) ? view : FolderView.Empty(FolderPath(run));

    /// <summary>
    /// Reads, in one call to the site, the folders of the cluster's runs that may need it this cycle (every run with
    /// an open leg, and every run waiting for its first); sizes for <paramref name="sizesFor"/>. False, with the
    /// cluster at fault, when the site cannot be read.
    /// </summary>
    public async Task<bool> InspectAsync(string cluster, IReadOnlySet<string> sizesFor, CancellationToken cancellationToken)
    {
        if (Faults.ContainsKey(cluster))
        {
            return false;
        }

        if (Inspected.Contains(cluster))
        {
            return true;
        }

        var open = TrackingStore.Legs(Db).Where(l => l.IsOpen).Select(l => l.RunId).ToHashSet(StringComparer.Ordinal);
        var runs = Runs.Values.Where(r => r.Cluster == cluster && (open.Contains(r.RunId) || r.State.IsActive() || r.State is RunState.Planned or RunState.WaitingBudget)).ToList();
        var site = Link(cluster).Site;
        var queries = runs.Select(r => new FolderQuery(site.PathOf(r.Folder), sizesFor.Contains(r.RunId))).ToList();
        IReadOnlyDictionary<string, FolderView>? views = null;
        if (!await Guarded(cluster, "reading its run folders", async () => views = await site.InspectAsync(queries, Settings, cancellationToken).ConfigureAwait(false)).ConfigureAwait(false))
        {
            return false;
        }

        Inspected.Add(cluster);
        foreach (var (run, query) in runs.Zip(queries))
        {
            if (views!.TryGetValue(query.Path, out var view))
            {
                Views[run.RunId] = view;
            }
        }

        return true;
    }

    /// <summary>The legs not yet ended, read now.</summary>
    public IReadOnlyList<JobLeg> OpenLegs() => TrackingStore.Legs(Db).Where(s => s.IsOpen).ToList();

    /// <summary>One transaction around <paramref name="write"/>.</summary>
    public void Commit(Action<SqliteTransaction> write)
    {
        using var tx = Db.BeginTransaction();
        write(tx);
        tx.Commit();
    }

    /// <summary>Saves a run with its transition (an event; a notice when the state changed).</summary>
    public void Save(SqliteTransaction tx, TrackedRun run, RunTransition? transition)
    {
        TrackingStore.Save(Db, tx, run, transition);
        if (transition is { Changed: true })
        {
            Notices.Add(new Notice(transition.At.ToString("O", CultureInfo.InvariantCulture), run.RunId, transition.From?.Name() ?? "", transition.To.Name(), transition.Why));
        }
    }

    /// <summary>
    /// Runs a batch-system call; on a batch-system error the cluster is at fault for this cycle (nothing is
    /// concluded about its runs) and false is returned.
    /// </summary>
    public async Task<bool> Guarded(string cluster, string what, Func<Task> call)
    {
        try
        {
            await call().ConfigureAwait(false);
            Answered.Add(cluster);
            return true;
        }
        catch (BatchSystemException e)
        {
            ClusterFault(cluster, what, e);
            return false;
        }
    }

    /// <summary>Notes that <paramref name="cluster"/> failed this cycle: one message per cluster; the whole text goes to the event log.</summary>
    public void ClusterFault(string cluster, string what, BatchSystemException e)
    {
        if (Faults.TryAdd(cluster, $"while {what}: {e.Message}"))
        {
            Messages.Add($"{cluster}: unreachable ({BatchErrorText.FirstLine(e.Message)}); its runs are left as they were; tried again next cycle");
        }
    }

    /// <summary>Records why a leg is cancelled, then asks its batch system.</summary>
    public async Task Cancel(TrackedRun run, JobLeg leg, string reason, CancellationToken cancellationToken)
    {
        leg.CancelFor(reason);
        Commit(tx => TrackingStore.Save(Db, tx, leg));
        await Batch(run.Cluster).CancelAsync(leg.JobId!, cancellationToken).ConfigureAwait(false);
    }
}
