using System.Globalization;
using Campaign.Batch;
using Campaign.Core.Lifecycle;
using Campaign.Core.Domain;
using Campaign.Core.Tracking;
using Campaign.Store;
using Microsoft.Data.Sqlite;

namespace Campaign.Tracking;

/// <summary>
/// One reconcile cycle over every tracked run: resolve submissions a crash left unconfirmed (by job name),
/// query each machine's batch system once for all its open segments, record segments that ended and decide the
/// next step (finish, continue from the newest valid checkpoint, hold), watch progress for stalls and a growing
/// constraint norm, and submit the segments runs need within the budget guard. Every state change is one SQLite
/// transaction with its event row; submissions record the intent before calling the batch system and the job id
/// after. The caller holds the <see cref="DaemonLock"/>.
/// </summary>
public sealed class Reconciler
{
    private readonly Workspace _workspace;
    private readonly IReadOnlyDictionary<string, IBatchSystem> _batch;
    private readonly TimeProvider _time;
    private readonly IReadOnlyDictionary<string, string> _jobEnvironment;
    private readonly List<Notice> _notices = new();
    private readonly List<string> _messages = new();
    private readonly Dictionary<string, int> _queries = new(StringComparer.Ordinal);
    private readonly Dictionary<string, string> _faults = new(StringComparer.Ordinal);
    private readonly HashSet<string> _answered = new(StringComparer.Ordinal);
    private int _submitted;
    private int _ended;
    private int _finished;
    private int _held;

    /// <summary>Creates the reconciler over an open workspace, with one batch system per machine.</summary>
    public Reconciler(Workspace workspace, IReadOnlyDictionary<string, IBatchSystem> batch, TimeProvider time, IReadOnlyDictionary<string, string>? jobEnvironment = null)
    {
        _workspace = workspace;
        _batch = batch;
        _time = time;
        _jobEnvironment = jobEnvironment ?? new Dictionary<string, string>();
    }

    private SqliteConnection Db => _workspace.Connection;

    private TrackingSettings Settings => _workspace.Config.Tracking;

    private string Now => _time.GetUtcNow().ToString("O", CultureInfo.InvariantCulture);

    /// <summary>Runs one cycle.</summary>
    public async Task<TickReport> TickAsync(CancellationToken cancellationToken)
    {
        var runs = TrackingStore.Runs(Db).ToDictionary(r => r.RunId, StringComparer.Ordinal);
        var open = TrackingStore.Segments(Db).Where(s => s.Phase != "ended").ToList();

        // A machine whose batch system cannot be reached this cycle (after the decorator's retries) is left as it
        // is: nothing is concluded about its jobs and nothing new is submitted to it; the next cycle tries again.
        var unreachable = new HashSet<string>(StringComparer.Ordinal);
        foreach (var segment in open.Where(s => s.Phase == "intent").ToList())
        {
            var machine = runs[segment.RunId].Machine;
            if (!unreachable.Contains(machine) && !await Guarded(machine, "looking up an unconfirmed submission", () => ResolveIntent(runs[segment.RunId], segment, cancellationToken)).ConfigureAwait(false))
            {
                unreachable.Add(machine);
            }
        }

        open = TrackingStore.Segments(Db).Where(s => s.Phase == "submitted").ToList();
        foreach (var group in open.GroupBy(s => runs[s.RunId].Machine).Where(g => !unreachable.Contains(g.Key)))
        {
            var batch = Batch(group.Key);
            IReadOnlyDictionary<string, JobStatus>? statuses = null;
            if (!await Guarded(group.Key, "querying its jobs", async () => statuses = await batch.QueryAsync(group.Select(s => s.JobId!).ToList(), cancellationToken).ConfigureAwait(false)).ConfigureAwait(false))
            {
                unreachable.Add(group.Key);
                continue;
            }

            _queries[group.Key] = _queries.GetValueOrDefault(group.Key) + 1;
            foreach (var segment in group.OrderBy(s => s.Number))
            {
                var status = statuses![segment.JobId!];
                await Observe(runs[segment.RunId], segment, status, cancellationToken).ConfigureAwait(false);
                if (status.State.IsActive() && segment.CancelReason is { Length: > 0 })
                {
                    // A cancel that did not get through before (the batch system was unreachable): try again.
                    await Guarded(group.Key, $"cancelling job {segment.JobId} again", () => batch.CancelAsync(segment.JobId!, cancellationToken)).ConfigureAwait(false);
                }
            }
        }

        var runningSegments = TrackingStore.Segments(Db).Where(s => s.Phase == "submitted" && s.JobState == JobState.Running.ToString()).GroupBy(s => s.RunId).ToDictionary(g => g.Key, g => g.First(), StringComparer.Ordinal);
        foreach (var run in runs.Values.Where(r => r.RunState == RunState.Running && !unreachable.Contains(r.Machine)))
        {
            if (!await Guarded(run.Machine, $"acting on the health of {run.RunId}", () => WatchHealth(run, runningSegments.GetValueOrDefault(run.RunId), cancellationToken)).ConfigureAwait(false))
            {
                unreachable.Add(run.Machine);
            }
        }

        unreachable.UnionWith(_faults.Keys);
        await SubmitNeeded(runs.Values.OrderBy(r => r.Position).ToList(), unreachable, cancellationToken).ConfigureAwait(false);

        RecordMachines();
        var failures = await new Notifier(Settings.NotifyCommand, _workspace.Root).SendAsync(_notices, cancellationToken).ConfigureAwait(false);
        _messages.AddRange(failures);
        var all = TrackingStore.Runs(Db);
        return new TickReport(_submitted, _ended, _finished, _held, all.Count(r => r.RunState == RunState.WaitingBudget), all.Count(r => r.RunState.IsActive()), _queries, _messages.ToList(), _faults.Keys.Order(StringComparer.Ordinal).ToList());
    }

    /// <summary>
    /// Runs a batch-system call; on a batch-system error the machine is at fault for this cycle (nothing is concluded
    /// about its runs) and false is returned.
    /// </summary>
    private async Task<bool> Guarded(string machine, string what, Func<Task> call)
    {
        try
        {
            await call().ConfigureAwait(false);
            _answered.Add(machine);
            return true;
        }
        catch (BatchSystemException e)
        {
            MachineFault(machine, what, e);
            return false;
        }
    }

    /// <summary>Notes that <paramref name="machine"/> failed this cycle: one message per machine, the whole text for the event log.</summary>
    private void MachineFault(string machine, string what, BatchSystemException e)
    {
        if (_faults.TryAdd(machine, $"while {what}: {e.Message}"))
        {
            _messages.Add($"{machine}: unreachable ({BatchErrorText.FirstLine(e.Message)}); its runs are left as they were; tried again next cycle");
        }
    }

    /// <summary>Stores which machines were at fault this cycle and which answered again, and when the cycle ran.</summary>
    private void RecordMachines()
    {
        var now = _time.GetUtcNow();
        using var tx = Db.BeginTransaction();
        foreach (var (machine, detail) in _faults)
        {
            if (MachineFaultStore.Record(Db, tx, machine, BatchErrorText.FirstLine(detail.Split(": ", 2)[^1]), now))
            {
                EventLog.Append(Db, tx, _time, "machine.unreachable", machine, detail);
            }
        }

        foreach (var machine in _answered.Where(m => !_faults.ContainsKey(m)))
        {
            if (MachineFaultStore.Clear(Db, tx, machine) is { } cleared)
            {
                EventLog.Append(Db, tx, _time, "machine.reachable", machine, $"answered again (unreachable since {cleared.Since.ToString("O", CultureInfo.InvariantCulture)})");
            }
        }

        MachineFaultStore.NoteCycle(Db, tx, now);
        tx.Commit();
    }

    private IBatchSystem Batch(string machine) =>
        _batch.TryGetValue(machine, out var batch) ? batch : throw new InvalidOperationException($"no batch system for machine {machine}");

    private RunFolder Folder(TrackedRun run) => new(Path.Combine(_workspace.Root, run.Folder), Settings);

    /// <summary>A segment recorded as intent only: the host stopped between recording it and learning the job id.</summary>
    private async Task ResolveIntent(TrackedRun run, Segment segment, CancellationToken cancellationToken)
    {
        var id = await Batch(run.Machine).FindAsync(segment.JobName, cancellationToken).ConfigureAwait(false);
        using var tx = Db.BeginTransaction();
        var from = run.State;
        if (id is not null)
        {
            segment.JobId = id;
            segment.Phase = "submitted";
            TrackingStore.Save(Db, tx, segment);
            run.State = RunState.Queued.Name();
            Change(tx, run, from, $"segment {segment.Number} found in the batch system as job {id} (its submission was not recorded before a stop)");
        }
        else
        {
            TrackingStore.DeleteIntent(Db, tx, segment.Id);
            run.State = RunState.Planned.Name();
            Change(tx, run, from, $"segment {segment.Number} never reached the batch system; it will be submitted again");
        }

        tx.Commit();
    }

    /// <summary>Applies what the batch system says about one open segment.</summary>
    private async Task Observe(TrackedRun run, Segment segment, JobStatus status, CancellationToken cancellationToken)
    {
        if (status.State == JobState.Unknown)
        {
            using var tx = Db.BeginTransaction();
            segment.NativeState = status.NativeState;
            segment.JobState = status.State.ToString();
            TrackingStore.Save(Db, tx, segment);
            tx.Commit();
            _messages.Add($"{run.RunId}: job {segment.JobId} is in a state Campaign does not know ({status.NativeState}); waiting, not acting");
            return;
        }

        if (status.State.IsActive())
        {
            // Nothing new (the common case for a long campaign): no write at all.
            var unchangedRun = !run.RunState.IsActive() || run.State == (status.State is JobState.Running or JobState.Finishing ? RunState.Running : RunState.Queued).Name();
            if (segment.JobState == status.State.ToString() && segment.NativeState == status.NativeState && unchangedRun)
            {
                return;
            }

            using var tx = Db.BeginTransaction();
            var from = run.State;
            var wasRunning = segment.JobState == JobState.Running.ToString();
            segment.NativeState = status.NativeState;
            segment.JobState = status.State.ToString();
            TrackingStore.Save(Db, tx, segment);
            if (run.RunState.IsActive())
            {
                var running = status.State is JobState.Running or JobState.Finishing;
                run.State = (running ? RunState.Running : RunState.Queued).Name();
                if (running && !wasRunning)
                {
                    run.ProgressAt = Now; // the stall clock starts when the segment starts
                    segment.StartedAt ??= Now;
                    TrackingStore.Save(Db, tx, segment);
                }

                Change(tx, run, from, running ? $"segment {segment.Number} (job {segment.JobId}) running" : $"segment {segment.Number} (job {segment.JobId}) {status.NativeState.ToLowerInvariant()}");
            }

            tx.Commit();
            return;
        }

        await EndSegment(run, segment, status, cancellationToken).ConfigureAwait(false);
    }

    private async Task EndSegment(TrackedRun run, Segment segment, JobStatus status, CancellationToken cancellationToken)
    {
        var profile = _workspace.Machine(run.Machine);
        var ending = status.State switch
        {
            JobState.Completed => "completed",
            JobState.TimedOut => "timed_out",
            JobState.Preempted => "preempted",
            JobState.NodeFailed => "node_failed",
            JobState.Failed => "failed",
            JobState.OutOfMemory => "out_of_memory",
            JobState.LaunchFailed => "launch_failed",
            JobState.DeadlineMissed => "deadline",
            JobState.Cancelled when segment.CancelReason == "stall" => "cancelled_for_stall",
            JobState.Cancelled => "cancelled",
            _ => "vanished",
        };
        var elapsed = status.Elapsed;
        var charged = elapsed is { } e
            ? profile.ChargedCoreHours(status.ChargedCores ?? (int)run.Cores, e.TotalHours)
            : segment.WorstCaseCoreHours; // no elapsed time known: charge the worst case rather than nothing
        var folder = Folder(run);
        var points = folder.Progress();
        var latest = points.Count > 0 ? Math.Max(points[^1].Time, run.ProgressT) : run.ProgressT;
        var others = TrackingStore.SegmentsOf(Db, run.RunId).Where(s => s.Phase != "ended" && s.Id != segment.Id).ToList();

        using var tx = Db.BeginTransaction();
        segment.Phase = "ended";
        segment.JobState = status.State.ToString();
        segment.NativeState = status.NativeState;
        segment.ExitCode = status.ExitCode;
        segment.Signal = status.Signal;
        segment.ElapsedSeconds = elapsed?.TotalSeconds;
        segment.ChargedCoreHours = charged;
        segment.EndedAt = Now;
        TrackingStore.Save(Db, tx, segment);
        _ended++;
        var from = run.State;
        run.ProgressT = latest;
        var cancelOthers = false;
        if (run.RunState.IsActive())
        {
            if (ending != "completed" && latest <= segment.StartT && Signals.Number(Settings.WarningSignal) is { } warning && Signals.EndedBy(warning, status.ExitCode, status.Signal))
            {
                ending = "too_short";
            }

            var end = new SegmentEnd(ending, segment.StartT, latest, run.TargetLength, folder.IsDone, (int)run.FailuresWithProgress, (int)run.FailuresWithoutProgress, (int)run.ShortSegments);
            var (step, why, withProgress, without) = SegmentDecision.Decide(end, Settings);
            run.FailuresWithProgress = withProgress;
            run.FailuresWithoutProgress = without;
            run.ShortSegments = ending == "too_short" ? run.ShortSegments + 1 : 0;
            var exit = status.ExitCode is null ? "" : $", exit {status.ExitCode}:{status.Signal ?? 0}";
            switch (step)
            {
                case NextStep.Finish:
                    run.State = RunState.Finished.Name();
                    run.Reason = why;
                    run.FinishedAt = Now;
                    _finished++;
                    cancelOthers = true;
                    break;
                case NextStep.Hold:
                    run.State = RunState.Held.Name();
                    run.Reason = why;
                    _held++;
                    cancelOthers = true;
                    break;
                default:
                    run.State = (others.Count > 0 ? RunState.Queued : RunState.Planned).Name();
                    run.Reason = "";
                    break;
            }

            Change(tx, run, from, $"segment {segment.Number} (job {segment.JobId}) ended {status.NativeState}{exit}: {why}");
            if (step == NextStep.Finish && !run.Rehearsal)
            {
                LogFinished(tx, run, folder);
            }
        }
        else
        {
            TrackingStore.Save(Db, tx, run, from, "", Now);
        }

        tx.Commit();
        if (cancelOthers)
        {
            foreach (var other in others.Where(o => o.JobId is not null))
            {
                await Cancel(run, other, "superfluous", cancellationToken).ConfigureAwait(false);
            }
        }
    }

    private void LogFinished(SqliteTransaction tx, TrackedRun run, RunFolder folder)
    {
        var segments = TrackingStore.SegmentsOf(Db, run.RunId, tx);
        var wallHours = segments.Sum(s => s.ElapsedSeconds ?? 0) / 3600;
        var (checkpointGb, outputGb) = folder.Sizes();
        var started = segments.Select(s => DateTimeOffset.Parse(s.SubmittedAt, CultureInfo.InvariantCulture)).DefaultIfEmpty().Min();
        var log = new RunLog(
            run.RunId,
            run.Configuration,
            (int)run.Level,
            (int)run.Cores,
            run.Machine,
            Math.Max(wallHours, 1e-9),
            RunOutcome.Completed,
            segments.Sum(s => s.ChargedCoreHours ?? 0),
            Math.Max(run.ProgressT, 1e-9),
            null,
            segments.Count,
            checkpointGb > 0 ? checkpointGb : null,
            outputGb > 0 ? outputGb : null,
            started == default ? null : started,
            _time.GetUtcNow());
        TrackingStore.LogFinishedRun(Db, tx, log, Now);
    }

    /// <summary>Progress, stalls and a growing constraint norm of a running run.</summary>
    private async Task WatchHealth(TrackedRun run, Segment? running, CancellationToken cancellationToken)
    {
        if (running is null || running.CancelReason is not null)
        {
            return;
        }

        var points = Folder(run).Progress();
        var now = _time.GetUtcNow();
        var from = run.State;
        if (points.Count > 0 && points[^1].Time > run.ProgressT)
        {
            using var tx = Db.BeginTransaction();
            run.ProgressT = points[^1].Time;
            run.Norm = points[^1].Norm;
            run.ProgressAt = Now;
            TrackingStore.Save(Db, tx, run, from, "", Now);
            tx.Commit();
        }

        if (Health.IsGoingBad(points, Settings.GrowthWindow, Settings.GrowthRateLimit, out var rate))
        {
            await HoldAndCancel(run, running, $"constraint norm growing steadily: rate {rate.ToString("G3", CultureInfo.InvariantCulture)} per M (doubling every {(Math.Log(2) / rate).ToString("0", CultureInfo.InvariantCulture)} M) over the last {Settings.GrowthWindow} reports", "bad", cancellationToken).ConfigureAwait(false);
            return;
        }

        var since = run.ProgressAt is null ? TimeSpan.Zero : now - DateTimeOffset.Parse(run.ProgressAt, CultureInfo.InvariantCulture);
        if (since.TotalMinutes < Settings.StallMinutes)
        {
            return;
        }

        var stalled = $"no progress for {since.TotalMinutes.ToString("0.#", CultureInfo.InvariantCulture)} min (t = {run.ProgressT.ToString("0.#", CultureInfo.InvariantCulture)} M)";
        if (run.StallRestarts == 0)
        {
            using (var tx = Db.BeginTransaction())
            {
                run.StallRestarts = 1;
                run.Reason = stalled + ": cancelled to restart once";
                TrackingStore.Save(Db, tx, run, from, "", Now);
                TrackingStore.Event(Db, tx, Now, run.RunId, from, from, stalled + "; cancelling segment " + running.Number.ToString(CultureInfo.InvariantCulture) + " to restart once");
                tx.Commit();
            }

            await Cancel(run, running, "stall", cancellationToken).ConfigureAwait(false);
        }
        else
        {
            await HoldAndCancel(run, running, stalled + " again after a restart", "stall", cancellationToken).ConfigureAwait(false);
        }
    }

    private async Task HoldAndCancel(TrackedRun run, Segment segment, string why, string cancelReason, CancellationToken cancellationToken)
    {
        using (var tx = Db.BeginTransaction())
        {
            var from = run.State;
            run.State = RunState.Held.Name();
            run.Reason = why;
            Change(tx, run, from, why);
            tx.Commit();
        }

        _held++;
        await Cancel(run, segment, cancelReason, cancellationToken).ConfigureAwait(false);
    }

    private async Task Cancel(TrackedRun run, Segment segment, string reason, CancellationToken cancellationToken)
    {
        using (var tx = Db.BeginTransaction())
        {
            segment.CancelReason = reason;
            TrackingStore.Save(Db, tx, segment);
            tx.Commit();
        }

        await Batch(run.Machine).CancelAsync(segment.JobId!, cancellationToken).ConfigureAwait(false);
    }

    /// <summary>Submits the segments runs need, oldest plan position first, within the budget guard.</summary>
    private async Task SubmitNeeded(IReadOnlyList<TrackedRun> runs, IReadOnlySet<string> unreachable, CancellationToken cancellationToken)
    {
        var segments = TrackingStore.Segments(Db);
        var openByRun = segments.Where(s => s.Phase != "ended").ToLookup(s => s.RunId, StringComparer.Ordinal);
        var lastNumber = segments.ToLookup(s => s.RunId, StringComparer.Ordinal);
        var ledger = new CampaignLedger(_workspace.Config.Allocations, _workspace.Machines, TrackingStore.Charges(Db));
        var today = DateOnly.FromDateTime(_time.GetUtcNow().UtcDateTime);
        foreach (var run in runs)
        {
            if (unreachable.Contains(run.Machine) || _faults.ContainsKey(run.Machine))
            {
                continue;
            }

            var openSegments = openByRun[run.RunId].ToList();
            var needsFirst = run.RunState is RunState.Planned or RunState.WaitingBudget && openSegments.Count == 0;
            var prequeue = Settings.Prequeue && run.RunState == RunState.Running && openSegments.Count == 1 && openSegments[0].JobId is not null;
            if (!needsFirst && !prequeue)
            {
                continue;
            }

            var profile = _workspace.Machine(run.Machine);
            var wallHours = Settings.SegmentMinutes is { } minutes ? minutes / 60 : profile.WallLimitHours;
            var worst = profile.ChargedCoreHours((int)run.Cores, wallHours);
            var verdict = ledger.Allows(run.Machine, worst, today, Settings.ReserveCoreHours);
            var why = verdict.Why;
            if (!verdict.Allowed)
            {
                if (needsFirst && (run.RunState != RunState.WaitingBudget || run.Reason != why))
                {
                    using var tx = Db.BeginTransaction();
                    var from = run.State;
                    run.State = RunState.WaitingBudget.Name();
                    run.Reason = why;
                    Change(tx, run, from, why);
                    tx.Commit();
                }

                continue;
            }

            if (await Submit(run, profile, wallHours, worst, lastNumber[run.RunId], prequeue ? openSegments[0].JobId : null, cancellationToken).ConfigureAwait(false))
            {
                ledger.Commit(run.Machine, worst);
            }
        }
    }

    /// <summary>Submits one segment (intent first, job id after); returns true when its worst case is now committed.</summary>
    private async Task<bool> Submit(TrackedRun run, MachineProfile profile, double wallHours, double worst, IEnumerable<Segment> segmentsOfRun, string? afterAny, CancellationToken cancellationToken)
    {
        var folder = Folder(run);
        var (checkpoint, skipped) = Checkpoints.NewestValid(folder.CheckpointFiles(), Settings.CheckpointMarker.Length > 0, TimeSpan.FromSeconds(Settings.CheckpointSettleSeconds), _time.GetUtcNow());
        var number = segmentsOfRun.Select(s => s.Number).DefaultIfEmpty(0).Max() + 1;
        var name = JobName.For(run.RunId, (int)number);
        Directory.CreateDirectory(Path.Combine(folder.Path, "logs"));
        var environment = new Dictionary<string, string>(_jobEnvironment)
        {
            ["CAMPAIGN_RUN_ID"] = run.RunId,
            ["CAMPAIGN_RUN_DIR"] = folder.Path,
            ["CAMPAIGN_SEGMENT"] = number.ToString(CultureInfo.InvariantCulture),
        };
        if (afterAny is not null)
        {
            environment["CAMPAIGN_RESTART"] = "newest"; // decided when it starts: the script picks the newest valid checkpoint
        }
        else if (checkpoint is not null)
        {
            environment["CAMPAIGN_RESTART"] = checkpoint.Path;
        }

        var warning = Settings.WarningSignal.Length > 0 && Settings.WarningSeconds > 0 && Settings.WarningSeconds < wallHours * 3600
            ? new WarningSignal(Settings.WarningSignal, Settings.WarningSeconds)
            : null;
        var logBase = Path.Combine(folder.Path, "logs", "segment-" + number.ToString("D3", CultureInfo.InvariantCulture));
        var request = new JobRequest(name, Path.GetFullPath(Settings.Script, _workspace.Root), folder.Path, (int)run.Cores, TimeSpan.FromHours(wallHours),
            logBase + ".out", logBase + ".err", environment, afterAny, warning);
        var segment = new Segment
        {
            RunId = run.RunId,
            Number = number,
            JobName = name,
            Phase = "intent",
            WorstCaseCoreHours = worst,
            WallSeconds = wallHours * 3600,
            StartT = run.ProgressT,
            RestartFrom = afterAny is not null ? "newest at start" : checkpoint?.Path,
            SubmittedAt = Now,
        };

        // 1. The intent, before the batch system hears of it.
        var before = (run.State, run.Reason);
        using (var tx = Db.BeginTransaction())
        {
            TrackingStore.Insert(Db, tx, segment);
            var from = run.State;
            if (afterAny is null)
            {
                run.State = RunState.Queued.Name();
                run.Reason = "";
            }

            var restart = checkpoint is null ? "from the start" : "from " + Path.GetFileName(checkpoint.Path);
            var passed = skipped.Count == 0 ? "" : "; passed over " + string.Join(", ", skipped.Select(s => Path.GetFileName(s.File.Path) + " (" + s.Why + ")"));
            Change(tx, run, from, afterAny is null ? $"submitting segment {number} {restart}{passed}" : $"pre-queueing segment {number} after job {afterAny}");
            if (run.State == from)
            {
                TrackingStore.Event(Db, tx, Now, run.RunId, from, from, afterAny is null ? $"submitting segment {number} {restart}{passed}" : $"pre-queueing segment {number} after job {afterAny}");
            }

            tx.Commit();
        }

        string id;
        try
        {
            id = await Batch(run.Machine).SubmitAsync(request, cancellationToken).ConfigureAwait(false);
            _answered.Add(run.Machine);
        }
        catch (BatchSystemException e) when (e.Kind == BatchErrorKind.Rejected)
        {
            // The batch system refused this request: the run's fault. Held with the first line; the whole text in the event.
            _answered.Add(run.Machine);
            using var tx = Db.BeginTransaction();
            TrackingStore.DeleteIntent(Db, tx, segment.Id);
            var from = run.State;
            run.State = RunState.Held.Name();
            run.Reason = "submission rejected: " + BatchErrorText.FirstLine(e.Message);
            Change(tx, run, from, "submission rejected: " + e.Message);
            tx.Commit();
            _held++;
            return false;
        }
        catch (BatchSystemException e) when (e.Kind == BatchErrorKind.Permanent)
        {
            // The machine's fault (its commands or configuration): the run is left as it was before this cycle.
            using var tx = Db.BeginTransaction();
            TrackingStore.DeleteIntent(Db, tx, segment.Id);
            var from = run.State;
            (run.State, run.Reason) = (before.State, before.Reason);
            TrackingStore.Save(Db, tx, run, from, $"{run.Machine} unreachable: segment {number} not submitted; left as it was", Now);
            tx.Commit();
            MachineFault(run.Machine, $"submitting {name}", e);
            return false;
        }
        catch (BatchSystemException e)
        {
            // It may or may not have reached the batch system: the intent stays, and the next cycle looks it up by name.
            MachineFault(run.Machine, $"submitting {name} (not confirmed: looked up by name next cycle)", e);
            return true;
        }

        // 2. The job id, after.
        using (var tx = Db.BeginTransaction())
        {
            segment.JobId = id;
            segment.Phase = "submitted";
            segment.JobState = JobState.Pending.ToString();
            TrackingStore.Save(Db, tx, segment);
            tx.Commit();
        }

        _submitted++;
        return true;
    }

    private void Change(SqliteTransaction tx, TrackedRun run, string from, string why)
    {
        TrackingStore.Save(Db, tx, run, from, why, Now);
        if (from != run.State)
        {
            _notices.Add(new Notice(Now, run.RunId, from, run.State, why));
        }
    }

}
