using Campaign.Batch;
using Campaign.Core.Domain;
using Campaign.Core.Tracking;
using Campaign.Store;

namespace Campaign.Tracking.Cycle;

/// <summary>
/// Step 3: a leg that is over is charged (its elapsed time on its charged cores, the worst case when the batch
/// system does not say), and its run decides: finish (written into the run logs unless a rehearsal), continue from
/// the newest valid checkpoint, or hold. Other open legs of a finished or held run are cancelled.
/// </summary>
internal static class EndLegs
{
    public static async Task EndAsync(CycleContext c, TrackedRun run, JobLeg leg, JobStatus status, CancellationToken cancellationToken)
    {
        var profile = c.Workspace.Cluster(run.Cluster);
        var charged = status.Elapsed is { } e
            ? profile.ChargedCoreHours(status.ChargedCores ?? run.Cores, e.TotalHours)
            : leg.WorstCase; // no elapsed time known: charge the worst case rather than nothing
        var folder = c.Folder(run);
        var points = folder.Progress;
        var latest = points.Count > 0 ? Math.Max(points[^1].Time, run.Progress) : run.Progress;
        var others = TrackingStore.LegsOf(c.Db, run.RunId).Where(s => s.IsOpen && s.Id != leg.Id).ToList();
        var ending = Ending(status, leg);
        if (latest <= leg.StartT && WarnedBeforeProgress(c.Settings, leg, status, ending))
        {
            ending = "too_short";
        }

        var exit = JobStates.Exit(status.ExitCode, status.Signal) is { Length: > 0 } words ? ", " + words : "";
        var step = NextStep.Continue;
        c.Commit(tx =>
        {
            leg.End(status.State.Name(), status.NativeState, status.ExitCode, status.Signal, status.Elapsed, charged, c.Now);
            TrackingStore.Save(c.Db, tx, leg);
            c.Ended++;
            var goneBad = Health.FirstNonFinite(points) is { } bad ? Health.NonFiniteReason(bad) : null;
            (step, var transition) = run.EndLeg(ending, leg.StartT, latest, folder.IsDone, others.Count > 0, $"leg {leg.Number} (job {leg.JobId}) ended {status.NativeState}{exit}", c.Settings, c.Now, goneBad);
            c.Save(tx, run, transition.Changed || run.State.IsActive() || step != NextStep.Continue ? transition : null);
            if (step == NextStep.Finish)
            {
                c.Finished++;
                if (!run.Rehearsal)
                {
                    LogFinished(c, tx, run, folder);
                }
            }
            else if (step == NextStep.Hold)
            {
                c.Held++;
            }
        });

        if (step is NextStep.Finish or NextStep.Hold)
        {
            foreach (var other in others.Where(o => o.JobId is not null))
            {
                await c.Cancel(run, other, "superfluous", cancellationToken).ConfigureAwait(false);
            }
        }
    }

    /// <summary>
    /// True when the warning signal ended the leg: the signal (or the shell's 128 + its number) is what it ended
    /// by, or it exited cleanly once the warning time had come (a code that checkpointed on the warning). Without
    /// progress, such a leg was too short for the code to start.
    /// </summary>
    private static bool WarnedBeforeProgress(TrackingSettings settings, JobLeg leg, JobStatus status, string ending)
    {
        if (settings.WarningSignal.Length == 0 || Signals.Number(settings.WarningSignal) is not { } warning)
        {
            return false;
        }

        if (ending != "succeeded" && Signals.EndedBy(warning, status.ExitCode, status.Signal))
        {
            return true;
        }

        var warnedAt = leg.Wall - TimeSpan.FromSeconds(settings.WarningSeconds);
        return ending == "succeeded" && warnedAt > TimeSpan.Zero && status.Elapsed is { } elapsed && elapsed >= warnedAt - TimeSpan.FromSeconds(1);
    }

    private static string Ending(JobStatus status, JobLeg leg) => status.State switch
    {
        JobState.Succeeded => "succeeded",
        JobState.OutOfTime => "out_of_time",
        JobState.Interrupted => "interrupted",
        JobState.Crashed => "crashed",
        JobState.Stopped when leg.CancelReason == "stall" => "stopped_for_stall",
        JobState.Stopped => "stopped",
        _ => "vanished",
    };

    private static void LogFinished(CycleContext c, Microsoft.Data.Sqlite.SqliteTransaction tx, TrackedRun run, Sites.FolderView folder)
    {
        var legs = TrackingStore.LegsOf(c.Db, run.RunId, tx);
        var wallHours = legs.Sum(s => s.Elapsed?.TotalHours ?? 0);
        var (checkpointGb, outputGb) = (folder.CheckpointGb ?? 0, folder.OutputGb ?? 0);
        DateTimeOffset? started = legs.Count == 0 ? null : legs.Min(s => s.SubmittedAt);
        var log = new RunLog(
            run.RunId,
            run.Configuration,
            run.Level,
            run.Cores,
            run.Cluster,
            Math.Max(wallHours, 1e-9),
            RunOutcome.Completed,
            legs.Sum(s => s.Charged ?? 0),
            Math.Max(run.Progress, 1e-9),
            null,
            legs.Count,
            checkpointGb > 0 ? checkpointGb : null,
            outputGb > 0 ? outputGb : null,
            started,
            c.Now);
        if (!TrackingStore.LogFinishedRun(c.Db, tx, log, c.Now))
        {
            TrackingStore.Event(c.Db, tx, new RunTransition(run.RunId, run.State, run.State, "not written into the run logs: an imported run has the same id, and an import is never overwritten", c.Now));
        }
    }
}
