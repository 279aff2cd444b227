using Campaign.Core.Tracking;
using Campaign.Store;

namespace Campaign.Tracking.Cycle;

/// <summary>
/// Step 1: legs recorded as intents only (the host stopped between recording one and learning its job id) are
/// looked up by their job name: found, they are submitted; not found, they never reached the batch system and are
/// dropped, so the run is submitted again.
/// </summary>
internal static class RecoverIntents
{
    public static async Task RunAsync(CycleContext c, CancellationToken cancellationToken)
    {
        foreach (var leg in c.OpenLegs().Where(s => s.Phase == Core.Lifecycle.LegPhase.Intent))
        {
            var run = c.Runs[leg.RunId];
            if (c.Faults.ContainsKey(run.Cluster))
            {
                continue;
            }

            string? id = null;
            if (!await c.Guarded(run.Cluster, "looking up an unconfirmed submission", async () => id = await c.Batch(run.Cluster).FindAsync(leg.JobName, c.FolderPath(run), cancellationToken).ConfigureAwait(false)).ConfigureAwait(false))
            {
                continue;
            }

            var settled = run.State is RunState.Finished or RunState.Failed;
            c.Commit(tx =>
            {
                if (id is not null)
                {
                    leg.Submitted(id, leg.JobState);
                    TrackingStore.Save(c.Db, tx, leg);
                    c.Save(tx, run, run.IntentResolved(true, $"leg {leg.Number} found in the batch system as job {id} (its submission was not recorded before a stop){(settled ? $"; the run is {run.State.Name()}: cancelling it" : "")}", c.Now));
                }
                else
                {
                    TrackingStore.DeleteIntent(c.Db, tx, leg.Id);
                    c.Save(tx, run, run.IntentResolved(false, $"leg {leg.Number} never reached the batch system{(settled ? "" : "; it will be submitted again")}", c.Now));
                }
            });
            if (id is not null && settled)
            {
                await c.Guarded(run.Cluster, $"cancelling job {id} of {run.State.Name()} run {run.RunId}", () => c.Cancel(run, leg, "superfluous", cancellationToken)).ConfigureAwait(false);
            }
        }
    }
}
