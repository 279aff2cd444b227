using System.Globalization;
using Campaign.Batch;
using Campaign.Core.Domain;
using Campaign.Core.Lifecycle;
using Campaign.Core.Tracking;
using Campaign.Store;
using Campaign.Tracking.Sites;

namespace Campaign.Tracking.Cycle;

/// <summary>
/// Step 5: every run that needs its next leg (or a pre-queued one) gets it, oldest plan position first, if the
/// budget rule allows its worst case (<see cref="CampaignLedger.Allows"/>); else it waits with the reason. The
/// folders of a cluster's chosen runs are prepared in one call (on a remote site: the leg script and the run's
/// files staged, checked by checksum) before its submissions. A
/// submission records its intent first and its job id after. A refusal of the request holds the run; a failure of
/// the cluster leaves the run as it was and skips the cluster for the rest of the cycle.
/// </summary>
internal static class SubmitLegs
{
    public static async Task RunAsync(CycleContext c, CancellationToken cancellationToken)
    {
        var legs = TrackingStore.Legs(c.Db);
        var openByRun = legs.Where(s => s.IsOpen).ToLookup(s => s.RunId, StringComparer.Ordinal);
        var lastNumber = legs.GroupBy(s => s.RunId, StringComparer.Ordinal).ToDictionary(g => g.Key, g => g.Max(s => s.Number), StringComparer.Ordinal);
        var ledger = new CampaignLedger(c.Workspace.Config.Allocations, c.Workspace.Clusters, TrackingStore.Charges(c.Db));
        var today = DateOnly.FromDateTime(c.Now.UtcDateTime);

        // 1. Which runs get a leg this cycle, in plan order, each within the budget rule with its worst case.
        var chosen = new List<Next>();
        foreach (var run in c.Runs.Values.OrderBy(r => r.Position).ToList())
        {
            if (c.Faults.ContainsKey(run.Cluster))
            {
                continue;
            }

            var open = openByRun[run.RunId].ToList();
            var needsFirst = run.State is RunState.Planned or RunState.WaitingBudget && open.Count == 0;
            var prequeue = c.Settings.Prequeue && run.State == RunState.Running && open.Count == 1 && open[0].JobId is not null;
            if (!needsFirst && !prequeue)
            {
                continue;
            }

            var profile = c.Workspace.Cluster(run.Cluster);
            var wallHours = c.Settings.LegMinutes is { } minutes ? minutes / 60 : profile.WallLimitHours;
            var worst = profile.ChargedCoreHours(run.Cores, wallHours);
            var verdict = ledger.Allows(run.Cluster, worst, today, c.Settings.ReserveCoreHours);
            if (!verdict.Allowed)
            {
                if (needsFirst && run.WaitForBudget(verdict.Why, c.Now) is { } waiting)
                {
                    c.Commit(tx => c.Save(tx, run, waiting));
                }

                continue;
            }

            ledger.Commit(run.Cluster, worst);
            chosen.Add(new Next(run, profile, wallHours, worst, lastNumber.GetValueOrDefault(run.RunId) + 1, prequeue ? open[0].JobId : null));
        }

        // 2. Per cluster: its run folders read (for the restart checkpoints) and prepared in one call each, then
        //    one submission per leg. A cluster that fails is skipped for the rest of the cycle; its runs stay as they were.
        var script = Path.GetFullPath(c.Settings.Script, c.Workspace.Root);
        foreach (var group in chosen.GroupBy(n => n.Run.Cluster, StringComparer.Ordinal))
        {
            var cluster = group.Key;
            if (!await c.InspectAsync(cluster, new HashSet<string>(), cancellationToken).ConfigureAwait(false))
            {
                continue;
            }

            var site = c.Link(cluster).Site;
            var folders = group.Select(n => new FolderToPrepare(n.Run.RunId, Path.Combine(c.Workspace.Root, n.Run.Folder), site.PathOf(n.Run.Folder))).ToList();
            PreparedFolders? prepared = null;
            if (!await c.Guarded(cluster, "preparing its run folders", async () => prepared = await site.PrepareAsync(folders, script, cancellationToken).ConfigureAwait(false)).ConfigureAwait(false))
            {
                continue;
            }

            foreach (var next in group)
            {
                if (c.Faults.ContainsKey(cluster))
                {
                    break;
                }

                if (!prepared!.Scripts.TryGetValue(next.Run.RunId, out var legScript))
                {
                    c.Messages.Add($"{next.Run.RunId}: leg {next.Number} not submitted this cycle: its run folder could not be prepared: {prepared.Problems.GetValueOrDefault(next.Run.RunId, "no reason given")}");
                    continue;
                }

                try
                {
                    await Submit(c, next, legScript, cancellationToken).ConfigureAwait(false);
                }
                catch (Microsoft.Data.Sqlite.SqliteException e) when (e.SqliteErrorCode == 19)
                {
                    // One run's trouble (a constraint its leg breaks) never stops the cycle for the others; it is
                    // reported and tried again next cycle.
                    c.Messages.Add($"{next.Run.RunId}: leg {next.Number} not submitted this cycle: {e.Message}");
                }
            }
        }
    }

    /// <summary>A leg chosen for submission this cycle.</summary>
    private sealed record Next(TrackedRun Run, ClusterProfile Profile, double WallHours, double Worst, int Number, string? AfterAny);

    /// <summary>Submits one leg (intent first, job id after); returns true when its worst case is now committed.</summary>
    private static async Task<bool> Submit(CycleContext c, Next next, string script, CancellationToken cancellationToken)
    {
        var (run, wallHours, worst, number, afterAny) = (next.Run, next.WallHours, next.Worst, next.Number, next.AfterAny);
        var folder = c.Folder(run);
        var (checkpoint, skipped) = Checkpoints.NewestValid(folder.Checkpoints, c.Settings.CheckpointMarker.Length > 0, TimeSpan.FromSeconds(c.Settings.CheckpointSettleSeconds), c.Now);
        var name = JobName.For(c.Workspace.Id, run.RunId, number);
        var environment = new Dictionary<string, string>(c.JobEnvironment)
        {
            ["CAMPAIGN_RUN_ID"] = run.RunId,
            ["CAMPAIGN_RUN_DIR"] = folder.Path,
            ["CAMPAIGN_LEG"] = number.ToString(CultureInfo.InvariantCulture),
            ["CAMPAIGN_" + "SEGMENT"] = number.ToString(CultureInfo.InvariantCulture), // for job scripts written before schema 9
        };
        if (afterAny is not null)
        {
            environment["CAMPAIGN_RESTART"] = "newest"; // decided when it starts: the script picks the newest valid checkpoint
        }
        else if (checkpoint is not null)
        {
            environment["CAMPAIGN_RESTART"] = checkpoint.Path;
        }

        var settings = c.Settings;
        var warning = settings.WarningSignal.Length > 0 && settings.WarningSeconds > 0 && settings.WarningSeconds < wallHours * 3600
            ? new WarningSignal(settings.WarningSignal, settings.WarningSeconds)
            : null;
        var logBase = folder.Path + "/logs/leg-" + number.ToString("D3", CultureInfo.InvariantCulture);
        var request = new JobRequest(name, script, folder.Path, run.Cores, TimeSpan.FromHours(wallHours),
            logBase + ".out", logBase + ".err", environment, afterAny, warning);
        var leg = new JobLeg(run.RunId, number, name, worst, TimeSpan.FromHours(wallHours), run.Progress, afterAny is not null ? "newest at start" : checkpoint?.Path, c.Now);

        // 1. The intent, before the batch system hears of it.
        var before = (run.State, run.Reason);
        var restart = checkpoint is null ? "from the start" : "from " + Path.GetFileName(checkpoint.Path);
        var passed = skipped.Count == 0 ? "" : "; passed over " + string.Join(", ", skipped.Select(s => Path.GetFileName(s.File.Path) + " (" + s.Why + ")"));
        c.Commit(tx =>
        {
            TrackingStore.Insert(c.Db, tx, leg);
            run.UseCheckpoint(afterAny is null ? checkpoint?.Path : null);
            var why = afterAny is null ? $"submitting leg {number} {restart}{passed}" : $"pre-queueing leg {number} after job {afterAny}";
            c.Save(tx, run, run.Submitting(why, prequeued: afterAny is not null, c.Now));
        });

        string id;
        try
        {
            id = await c.Batch(run.Cluster).SubmitAsync(request, cancellationToken).ConfigureAwait(false);
            c.Answered.Add(run.Cluster);
        }
        catch (BatchSystemException e) when (e.Kind == BatchErrorKind.Rejected)
        {
            // The batch system refused this request: the run's fault. Held with the first line; the whole text in the event.
            c.Answered.Add(run.Cluster);
            c.Commit(tx =>
            {
                TrackingStore.DeleteIntent(c.Db, tx, leg.Id);
                c.Save(tx, run, run.Hold("submission rejected: " + BatchErrorText.FirstLine(e.Message), c.Now, "submission rejected: " + e.Message));
            });
            c.Held++;
            return false;
        }
        catch (BatchSystemException e) when (e.Kind == BatchErrorKind.Permanent)
        {
            // The cluster's fault (its commands or configuration): the run is left as it was before this cycle.
            c.Commit(tx =>
            {
                TrackingStore.DeleteIntent(c.Db, tx, leg.Id);
                c.Save(tx, run, run.Restore(before.State, before.Reason, $"{run.Cluster} unreachable: leg {number} not submitted; left as it was", c.Now));
            });
            c.ClusterFault(run.Cluster, $"submitting {name}", e);
            return false;
        }
        catch (BatchSystemException e)
        {
            // It may or may not have reached the batch system: the intent stays, and the next cycle looks it up by name.
            c.ClusterFault(run.Cluster, $"submitting {name} (not confirmed: looked up by name next cycle)", e);
            return true;
        }

        // 2. The job id, after.
        leg.Submitted(id, JobState.Waiting.Name());
        c.Commit(tx => TrackingStore.Save(c.Db, tx, leg));
        c.Submitted++;
        return true;
    }
}
