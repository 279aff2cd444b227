using Campaign.Batch;
using Campaign.Core.Lifecycle;
using Campaign.Core.Tracking;
using Campaign.Store;

namespace Campaign.Tracking.Cycle;

/// <summary>
/// Step 2: one query per cluster for all its submitted legs, then one reading of its run folders; a leg still alive updates its run (queued or
/// running, the stall clock starting when it starts); a leg that is over is ended and charged
/// (<see cref="EndLegs"/>). A state the adapter does not know is waited on, never acted on.
/// </summary>
internal static class ObserveJobs
{
    public static async Task RunAsync(CycleContext c, CancellationToken cancellationToken)
    {
        var submitted = c.OpenLegs().Where(s => s.Phase == LegPhase.Submitted).ToList();
        foreach (var group in submitted.GroupBy(s => c.Runs[s.RunId].Cluster).Where(g => !c.Faults.ContainsKey(g.Key)))
        {
            var batch = c.Batch(group.Key);
            IReadOnlyDictionary<string, JobStatus>? statuses = null;
            if (!await c.Guarded(group.Key, "querying its jobs", async () => statuses = await batch.QueryAsync(group.Select(s => s.JobId!).ToList(), cancellationToken).ConfigureAwait(false)).ConfigureAwait(false))
            {
                continue;
            }

            c.Queries[group.Key] = c.Queries.GetValueOrDefault(group.Key) + 1;

            // The run folders, read once for the cluster after its states (sizes for the runs whose leg is over): a
            // site that cannot be read leaves its runs as they were.
            var ending = group.Where(s => !statuses![s.JobId!].State.IsActive()).Select(s => s.RunId).ToHashSet(StringComparer.Ordinal);
            if (!await c.InspectAsync(group.Key, ending, cancellationToken).ConfigureAwait(false))
            {
                continue;
            }

            // A run with a pre-queued leg has two open jobs: it is running while either runs, so the waiting one
            // never flips it back to queued (and its health checks keep running).
            var runningRuns = group.Where(s => statuses![s.JobId!].State is JobState.Working).Select(s => s.RunId).ToHashSet(StringComparer.Ordinal);
            foreach (var leg in group.OrderBy(s => s.Number))
            {
                var status = statuses![leg.JobId!];
                await Observe(c, c.Runs[leg.RunId], leg, status, runningRuns.Contains(leg.RunId), cancellationToken).ConfigureAwait(false);
                if (status.State.IsActive() && leg.CancelReason is { Length: > 0 })
                {
                    // A cancel that did not get through before (the batch system was unreachable): try again.
                    await c.Guarded(group.Key, $"cancelling job {leg.JobId} again", () => batch.CancelAsync(leg.JobId!, cancellationToken)).ConfigureAwait(false);
                }
            }
        }
    }

    private static async Task Observe(CycleContext c, TrackedRun run, JobLeg leg, JobStatus status, bool runRunning, CancellationToken cancellationToken)
    {
        if (status.State == JobState.Unrecognised)
        {
            if (leg.Observe(status.State.Name(), status.NativeState, running: false, c.Now))
            {
                c.Commit(tx => TrackingStore.Save(c.Db, tx, leg));
            }

            c.Messages.Add($"{run.RunId}: job {leg.JobId} is in a state Campaign does not know ({status.NativeState}); waiting, not acting");
            return;
        }

        if (!status.State.IsActive())
        {
            await EndLegs.EndAsync(c, run, leg, status, cancellationToken).ConfigureAwait(false);
            return;
        }

        var running = status.State is JobState.Working;
        var startedNow = running && leg.StartedAt is null;
        runRunning |= running;
        var runChanges = run.State.IsActive() && run.State != (runRunning ? RunState.Running : RunState.Queued);
        var legChanged = leg.Observe(status.State.Name(), status.NativeState, running, c.Now);
        if (!legChanged && !runChanges)
        {
            return; // nothing new (the common case for a long campaign): no write at all
        }

        c.Commit(tx =>
        {
            TrackingStore.Save(c.Db, tx, leg);
            var why = running ? $"leg {leg.Number} (job {leg.JobId}) running" : $"leg {leg.Number} (job {leg.JobId}) {status.NativeState.ToLowerInvariant()}";
            if (runChanges && run.Observe(runRunning, startedNow, why, c.Now) is { } transition)
            {
                c.Save(tx, run, transition.Changed ? transition : null);
            }
        });
    }
}
