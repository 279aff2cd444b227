using Campaign.Batch;
using Campaign.Core.Tracking;
using Campaign.Store;

namespace Campaign.Tracking.Cycle;

/// <summary>
/// Step 0, once after a backup is restored: the workspace may have submitted legs after the backup was taken,
/// and the restored database does not know them. Before anything is submitted, each unfinished run's next job
/// names (leg n + 1, n + 2, ...) are looked up in its cluster's queue; every job found is ours (the name
/// carries the workspace id) and is recorded as a submitted leg, so it is observed, charged and never
/// submitted twice. A cluster that cannot be asked keeps the look-up pending for the next cycle.
/// </summary>
internal static class RecoverAfterRestore
{
    /// <summary>Jobs looked up per run at most (a run that submitted more since the backup is followed next cycle).</summary>
    private const int MaximumPerRun = 200;

    public static async Task RunAsync(CycleContext c, CancellationToken cancellationToken)
    {
        if (!WorkspaceBackup.NeedsJobLookup(c.Db))
        {
            return;
        }

        var legs = TrackingStore.Legs(c.Db);
        var former = TrackingStore.FormerIds(c.Db);
        var last = legs.GroupBy(s => s.RunId, StringComparer.Ordinal).ToDictionary(g => g.Key, g => g.Max(s => s.Number), StringComparer.Ordinal);
        var found = 0;
        foreach (var run in c.Runs.Values.Where(r => r.State is not (RunState.Finished or RunState.Failed)).OrderBy(r => r.Position))
        {
            if (c.Faults.ContainsKey(run.Cluster))
            {
                continue;
            }

            var profile = c.Workspace.Cluster(run.Cluster);
            var wall = TimeSpan.FromHours(c.Settings.LegMinutes is { } minutes ? minutes / 60 : profile.WallLimitHours);
            for (var number = last.GetValueOrDefault(run.RunId) + 1; number <= last.GetValueOrDefault(run.RunId) + MaximumPerRun; number++)
            {
                // A job submitted before the upgrade to schema 9 carries the run's former id and leg suffix.
                var names = former.TryGetValue(run.RunId, out var formerId)
                    ? new[] { JobName.For(c.Workspace.Id, run.RunId, number), JobName.Former(c.Workspace.Id, formerId, number) }
                    : new[] { JobName.For(c.Workspace.Id, run.RunId, number) };
                string? id = null;
                var name = names[0];
                foreach (var candidate in names)
                {
                    if (!await c.Guarded(run.Cluster, $"looking up {candidate} after a restore", async () => id = await c.Batch(run.Cluster).FindAsync(candidate, c.FolderPath(run), cancellationToken).ConfigureAwait(false)).ConfigureAwait(false))
                    {
                        break;
                    }

                    if (id is not null)
                    {
                        name = candidate;
                        break;
                    }
                }

                if (id is null)
                {
                    break;
                }

                var leg = new JobLeg(run.RunId, number, name, profile.ChargedCoreHours(run.Cores, wall.TotalHours), wall, run.Progress, "newest at start", c.Now);
                leg.Submitted(id, "");
                var jobId = id;
                c.Commit(tx =>
                {
                    TrackingStore.Insert(c.Db, tx, leg);
                    c.Save(tx, run, run.IntentResolved(true, $"leg {number} found in the batch system as job {jobId} after a restore (submitted after the backup was taken)", c.Now));
                });
                found++;
            }
        }

        if (c.Faults.Count == 0)
        {
            c.Commit(tx => WorkspaceBackup.JobLookupDone(c.Db, tx));
            c.Messages.Add($"after a restore: {found} jobs submitted after the backup were found by name and are followed again");
        }
    }
}
