using System.Globalization;
using Campaign.Batch;
using Campaign.Core.Lifecycle;
using Campaign.Core.Tracking;

namespace Campaign.Tracking.Cycle;

/// <summary>
/// Step 4: the progress of every running run, as this cycle read it from its folder (<see cref="CycleContext.InspectAsync"/>); a constraint norm that grows steadily holds
/// the run; no progress for stall_minutes cancels the leg to restart once, and a second stall holds the run.
/// </summary>
internal static class WatchHealth
{
    public static async Task RunAsync(CycleContext c, CancellationToken cancellationToken)
    {
        var running = c.OpenLegs()
            .Where(s => s.Phase == LegPhase.Submitted && s.JobState == JobState.Working.Name())
            .GroupBy(s => s.RunId, StringComparer.Ordinal)
            .ToDictionary(g => g.Key, g => g.First(), StringComparer.Ordinal);
        foreach (var run in c.Runs.Values.Where(r => r.State == RunState.Running && !c.Faults.ContainsKey(r.Cluster) && c.Inspected.Contains(r.Cluster)).ToList())
        {
            if (running.GetValueOrDefault(run.RunId) is not { CancelReason: null } leg)
            {
                continue;
            }

            await c.Guarded(run.Cluster, $"acting on the health of {run.RunId}", () => Watch(c, run, leg, cancellationToken)).ConfigureAwait(false);
        }
    }

    private static async Task Watch(CycleContext c, TrackedRun run, JobLeg leg, CancellationToken cancellationToken)
    {
        var points = c.Folder(run).Progress;
        var now = c.Now;
        if (points.Count > 0 && points[^1].Time > run.Progress)
        {
            run.NoteProgress(points[^1].Time, points[^1].Norm, now);
            c.Commit(tx => c.Save(tx, run, null));
        }

        if (Health.FirstNonFinite(points) is { } bad)
        {
            await HoldAndCancel(c, run, leg, Health.NonFiniteReason(bad), "bad", cancellationToken).ConfigureAwait(false);
            return;
        }

        if (Health.IsGoingBad(points, c.Settings.GrowthWindow, c.Settings.GrowthRateLimit, out var rate))
        {
            var why = $"constraint norm growing steadily: rate {rate.ToString("G3", CultureInfo.InvariantCulture)} per M (doubling every {(Math.Log(2) / rate).ToString("0", CultureInfo.InvariantCulture)} M) over the last {c.Settings.GrowthWindow} reports";
            await HoldAndCancel(c, run, leg, why, "bad", cancellationToken).ConfigureAwait(false);
            return;
        }

        var since = run.ProgressAt is { } at ? now - at : TimeSpan.Zero;
        if (since.TotalMinutes < c.Settings.StallMinutes)
        {
            return;
        }

        var stalled = $"no progress for {since.TotalMinutes.ToString("0.#", CultureInfo.InvariantCulture)} min (t = {run.Progress.ToString("0.#", CultureInfo.InvariantCulture)} M)";
        if (run.StallRestarts == 0)
        {
            c.Commit(tx => c.Save(tx, run, run.StalledOnce(stalled, leg.Number, now)));
            await c.Cancel(run, leg, "stall", cancellationToken).ConfigureAwait(false);
        }
        else
        {
            await HoldAndCancel(c, run, leg, stalled + " again after a restart", "stall", cancellationToken).ConfigureAwait(false);
        }
    }

    private static async Task HoldAndCancel(CycleContext c, TrackedRun run, JobLeg leg, string why, string cancelReason, CancellationToken cancellationToken)
    {
        c.Commit(tx => c.Save(tx, run, run.Hold(why, c.Now)));
        c.Held++;
        await c.Cancel(run, leg, cancelReason, cancellationToken).ConfigureAwait(false);
    }
}
