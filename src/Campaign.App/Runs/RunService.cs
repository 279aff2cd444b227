using System.Globalization;
using System.IO.Enumeration;
using Campaign.Core.Lifecycle;
using Campaign.Core.Domain;
using Campaign.Core.Tracking;
using Campaign.Store;
using Campaign.Tracking;

namespace Campaign.App.Runs;

/// <summary>Which runs a human acts on: named ones, or every run whose id matches a pattern and/or is in a state.</summary>
/// <param name="Workspace">Workspace folder.</param>
/// <param name="Ids">Run ids (exact).</param>
/// <param name="Match">A pattern over run ids ('*' any characters, '?' one), or null.</param>
/// <param name="State">Only runs in this state, or null.</param>
public sealed record RunSelection(string Workspace, IReadOnlyList<string> Ids, string? Match, RunState? State);

/// <summary>One run a human changed.</summary>
/// <param name="RunId">The run.</param>
/// <param name="From">Its state before.</param>
/// <param name="To">Its state after.</param>
public sealed record RunChange(string RunId, RunState From, RunState To);

/// <summary>Daemon settings.</summary>
/// <param name="Workspace">Workspace folder.</param>
/// <param name="IntervalSeconds">Seconds between cycles, or null for the workspace's setting.</param>
/// <param name="UntilDone">Stop when no run is active.</param>
public sealed record WatchRequest(string Workspace, double? IntervalSeconds, bool UntilDone);

/// <summary>
/// Running the campaign: one reconcile cycle, the daemon, and the human controls (release and abandon, one run or
/// many by pattern or state). Every call takes the workspace's daemon lock: only one actor at a time.
/// </summary>
public sealed class RunService
{
    private readonly TimeProvider _time;
    private readonly BatchAccess _batch;

    /// <summary>Creates the service.</summary>
    public RunService(TimeProvider time, BatchAccess batch)
    {
        _time = time;
        _batch = batch;
    }

    /// <summary>One reconcile cycle.</summary>
    public TickReport Cycle(string workspaceRoot, CancellationToken cancellationToken = default)
    {
        using var workspace = Workspace.Open(workspaceRoot, _time);
        using var daemonLock = Lock(workspace);
        return Reconciler(workspace).TickAsync(cancellationToken).GetAwaiter().GetResult();
    }

    /// <summary>The daemon: cycles every interval until <paramref name="stop"/> (or until no run is active); <paramref name="log"/> hears a line per cycle.</summary>
    public void Watch(WatchRequest request, Action<string> log, Action<string> error, CancellationToken stop)
    {
        using var workspace = Workspace.Open(request.Workspace, _time);
        using var daemonLock = Lock(workspace);
        var seconds = request.IntervalSeconds ?? workspace.Config.Tracking.ReconcileSeconds;
        if (!(seconds >= 0.1 && seconds <= 86_400))
        {
            throw new InvalidInputException(new[] { $"--interval = {seconds.ToString(CultureInfo.InvariantCulture)}: expected seconds from 0.1 to 86400" });
        }

        log($"Watching {workspace.Root} every {seconds.ToString(CultureInfo.InvariantCulture)} s (Ctrl-C or SIGTERM to stop).");
        using var gone = CancellationTokenSource.CreateLinkedTokenSource(stop);
        string? goneWhy = null;
        WatchHost.RunAsync(
            async token =>
            {
                if (!workspace.IsStillItsDatabase(out var why))
                {
                    // Never write on blindly into a database that was deleted, emptied or replaced under the daemon.
                    goneWhy = why;
                    await gone.CancelAsync().ConfigureAwait(false);
                    return new TickReport(0, 0, 0, 0, 0, 1, new Dictionary<string, int>(), new[] { why });
                }

                try
                {
                    var report = await Reconciler(workspace).TickAsync(token).ConfigureAwait(false);
                    log($"{_time.GetUtcNow().ToString("HH:mm:ss", CultureInfo.InvariantCulture)} {Summary(report)}");
                    return report;
                }
                catch (Exception e) when (e is Batch.BatchSystemException or IOException or Microsoft.Data.Sqlite.SqliteException or InvalidOperationException)
                {
                    error($"campaign: cycle failed, will try again: {e.Message}");
                    return new TickReport(0, 0, 0, 0, 0, 1, new Dictionary<string, int>(), new[] { e.Message });
                }
            },
            _ =>
            {
                var runs = TrackingStore.Runs(workspace.Connection);
                using var tx = workspace.Connection.BeginTransaction();
                EventLog.Append(workspace.Connection, tx, _time, "summary", null, string.Join(", ", runs.GroupBy(r => r.State).Select(g => $"{g.Count()} {g.Key}")));
                tx.Commit();
                return Task.CompletedTask;
            },
            TimeSpan.FromSeconds(seconds),
            request.UntilDone,
            gone.Token).GetAwaiter().GetResult();
        if (goneWhy is not null)
        {
            throw new InvalidOperationException($"stopped watching: {goneWhy}; nothing more was written. Restore campaign.db from a backup (docs/operations.md) before watching again");
        }
    }

    /// <summary>One line for a cycle.</summary>
    public static string Summary(TickReport r) =>
        $"{r.Submitted} submitted, {r.Ended} ended, {r.Finished} finished, {r.Held} held, {r.WaitingBudget} waiting for budget, {r.Active} active"
        + (r.Messages.Count > 0 ? "; " + string.Join("; ", r.Messages) : "");

    /// <summary>Lets held runs continue (after a human has looked at them).</summary>
    public IReadOnlyList<RunChange> Release(RunSelection selection) =>
        Change(selection, r => r == RunState.Held, "a held run", RunState.Planned);

    /// <summary>Gives runs up: their open jobs are cancelled and they are marked failed.</summary>
    public IReadOnlyList<RunChange> Abandon(RunSelection selection) =>
        Change(selection, r => r != RunState.Finished && r != RunState.Failed, "a run that has not finished or been given up", RunState.Failed);

    private IReadOnlyList<RunChange> Change(RunSelection selection, Func<RunState, bool> eligible, string expected, RunState to)
    {
        using var workspace = Workspace.Open(selection.Workspace, _time);
        using var daemonLock = Lock(workspace);
        var runs = TrackingStore.Runs(workspace.Connection).ToDictionary(r => r.RunId, StringComparer.Ordinal);
        var chosen = Select(runs, selection, eligible, expected);
        var batch = to == RunState.Failed ? _batch.For(workspace, _time) : null;
        var at = _time.GetUtcNow();
        var changes = new List<RunChange>();
        foreach (var run in chosen)
        {
            using var tx = workspace.Connection.BeginTransaction();
            var previous = run.State;
            if (batch is not null)
            {
                Settle(workspace, tx, batch[run.Cluster], run);
            }

            TrackingStore.Save(workspace.Connection, tx, run, to == RunState.Failed ? run.Abandon(at) : run.Release(at));
            tx.Commit();
            changes.Add(new RunChange(run.RunId, previous, to));
        }

        return changes;
    }

    /// <summary>
    /// Cancels every open job of a run being given up: submitted ones by id, and unconfirmed submissions (intents)
    /// looked up by name first; an intent the batch system does not have is dropped. An intent that cannot be
    /// looked up now stays, and the next cycle cancels it if it turns up (a given-up run never comes back).
    /// </summary>
    private static void Settle(Workspace workspace, Microsoft.Data.Sqlite.SqliteTransaction tx, ClusterLink link, TrackedRun run)
    {
        var batch = link.Batch;
        foreach (var leg in TrackingStore.LegsOf(workspace.Connection, run.RunId, tx).Where(s => s.IsOpen))
        {
            var id = leg.JobId;
            if (leg.Phase == LegPhase.Intent)
            {
                try
                {
                    id = batch.FindAsync(leg.JobName, link.Site.PathOf(run.Folder), CancellationToken.None).GetAwaiter().GetResult();
                }
                catch (Batch.BatchSystemException)
                {
                    continue;
                }

                if (id is null)
                {
                    TrackingStore.DeleteIntent(workspace.Connection, tx, leg.Id);
                    continue;
                }

                leg.Submitted(id, "");
            }

            leg.CancelFor("abandoned");
            TrackingStore.Save(workspace.Connection, tx, leg);
            try
            {
                batch.CancelAsync(id!, CancellationToken.None).GetAwaiter().GetResult();
            }
            catch (Batch.BatchSystemException)
            {
                // Recorded as cancelled by us: the next cycle that sees the job alive cancels it again.
            }
        }
    }

    private static IReadOnlyList<TrackedRun> Select(IReadOnlyDictionary<string, TrackedRun> runs, RunSelection selection, Func<RunState, bool> eligible, string expected)
    {
        var problems = new List<string>();
        if (selection.Ids.Count == 0 && selection.Match is null && selection.State is null)
        {
            problems.Add("no runs given: expected run ids, --match PATTERN or --state STATE");
        }

        foreach (var id in selection.Ids.Where(id => !runs.ContainsKey(id)))
        {
            problems.Add($"{id}: no such tracked run: expected one of {string.Join(", ", runs.Keys.Take(10))}{(runs.Count > 10 ? $", ... and {runs.Count - 10} more" : "")}");
        }

        foreach (var id in selection.Ids.Where(runs.ContainsKey).Where(id => !eligible(runs[id].State)))
        {
            problems.Add($"{id}: state {runs[id].State.Name()}: expected {expected}");
        }

        if (problems.Count > 0)
        {
            throw new InvalidInputException(problems);
        }

        var chosen = selection.Ids.Select(id => runs[id]).ToList();
        if (selection.Match is not null || selection.State is not null)
        {
            chosen.AddRange(runs.Values.Where(r =>
                (selection.Match is null || FileSystemName.MatchesSimpleExpression(selection.Match, r.RunId, ignoreCase: false))
                && (selection.State is null || r.State == selection.State)
                && eligible(r.State)));
        }

        var result = chosen.DistinctBy(r => r.RunId).OrderBy(r => r.Position).ToList();
        if (result.Count == 0)
        {
            throw new InvalidInputException(new[] { $"{(selection.Match is null ? "" : "--match " + selection.Match + " ")}{(selection.State is null ? "" : "--state " + selection.State.Value.Name())}: no run matches: expected {expected}" });
        }

        return result;
    }

    private Reconciler Reconciler(Workspace workspace) => new(workspace, _batch.For(workspace, _time), _time, _batch.JobEnvironment);

    private static DaemonLock Lock(Workspace workspace) =>
        DaemonLock.TryTake(workspace.Root, out var holder)
        ?? throw new InvalidOperationException($"another campaign daemon or command ({holder}) is acting on {workspace.Root}; only one may act at a time");
}
