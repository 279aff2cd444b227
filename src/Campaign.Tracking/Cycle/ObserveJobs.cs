using Campaign.Batch;
using Campaign.Core.Lifecycle;
using Campaign.Core.Tracking;
using Campaign.Store;

namespace Campaign.Tracking.Cycle;

/// <summary>
/// Step 2: one query per machine for all its submitted segments; a segment still alive updates its run (queued or
/// running, the stall clock starting when it starts); a segment that is over is ended and charged
/// (<see cref="EndSegments"/>). A state the adapter does not know is waited on, never acted on.
/// </summary>
internal static class ObserveJobs
{
    public static async Task RunAsync(CycleContext c, CancellationToken cancellationToken)
    {
        var submitted = c.OpenSegments().Where(s => s.Phase == SegmentPhase.Submitted).ToList();
        foreach (var group in submitted.GroupBy(s => c.Runs[s.RunId].Machine).Where(g => !c.Faults.ContainsKey(g.Key)))
        {
            var batch = c.Batch(group.Key);
            IReadOnlyDictionary<string, JobStatus>? statuses = null;
            if (!await c.Guarded(group.Key, "querying its jobs", async () => statuses = await batch.QueryAsync(group.Select(s => s.JobId!).ToList(), cancellationToken).ConfigureAwait(false)).ConfigureAwait(false))
            {
                continue;
            }

            c.Queries[group.Key] = c.Queries.GetValueOrDefault(group.Key) + 1;

            // A run with a pre-queued segment has two open jobs: it is running while either runs, so the waiting one
            // never flips it back to queued (and its health checks keep running).
            var runningRuns = group.Where(s => statuses![s.JobId!].State is JobState.Running or JobState.Finishing).Select(s => s.RunId).ToHashSet(StringComparer.Ordinal);
            foreach (var segment in group.OrderBy(s => s.Number))
            {
                var status = statuses![segment.JobId!];
                await Observe(c, c.Runs[segment.RunId], segment, status, runningRuns.Contains(segment.RunId), cancellationToken).ConfigureAwait(false);
                if (status.State.IsActive() && segment.CancelReason is { Length: > 0 })
                {
                    // A cancel that did not get through before (the batch system was unreachable): try again.
                    await c.Guarded(group.Key, $"cancelling job {segment.JobId} again", () => batch.CancelAsync(segment.JobId!, cancellationToken)).ConfigureAwait(false);
                }
            }
        }
    }

    private static async Task Observe(CycleContext c, TrackedRun run, JobSegment segment, JobStatus status, bool runRunning, CancellationToken cancellationToken)
    {
        if (status.State == JobState.Unknown)
        {
            if (segment.Observe(status.State.ToString(), status.NativeState, running: false, c.Now))
            {
                c.Commit(tx => TrackingStore.Save(c.Db, tx, segment));
            }

            c.Messages.Add($"{run.RunId}: job {segment.JobId} is in a state Campaign does not know ({status.NativeState}); waiting, not acting");
            return;
        }

        if (!status.State.IsActive())
        {
            await EndSegments.EndAsync(c, run, segment, status, cancellationToken).ConfigureAwait(false);
            return;
        }

        var running = status.State is JobState.Running or JobState.Finishing;
        var startedNow = running && segment.StartedAt is null;
        runRunning |= running;
        var runChanges = run.State.IsActive() && run.State != (runRunning ? RunState.Running : RunState.Queued);
        var segmentChanged = segment.Observe(status.State.ToString(), status.NativeState, running, c.Now);
        if (!segmentChanged && !runChanges)
        {
            return; // nothing new (the common case for a long campaign): no write at all
        }

        c.Commit(tx =>
        {
            TrackingStore.Save(c.Db, tx, segment);
            var why = running ? $"segment {segment.Number} (job {segment.JobId}) running" : $"segment {segment.Number} (job {segment.JobId}) {status.NativeState.ToLowerInvariant()}";
            if (runChanges && run.Observe(runRunning, startedNow, why, c.Now) is { } transition)
            {
                c.Save(tx, run, transition.Changed ? transition : null);
            }
        });
    }
}
