using System.CommandLine;
using System.Globalization;
using System.Runtime.InteropServices;
using Campaign.Batch;
using Campaign.Batch.Resilience;
using Campaign.Cli.Output;
using Campaign.Core.Domain;
using Campaign.Core.Tracking;
using Campaign.Store;
using Campaign.Tracking;

namespace Campaign.Cli.Commands;

/// <summary>track, tick, watch, status, release, abandon: running the plan.</summary>
internal static class TrackingCommands
{
    public static IEnumerable<Command> Build(CampaignApp app)
    {
        yield return Track(app);
        yield return Tick(app);
        yield return Watch(app);
        yield return Status(app);
        yield return Release(app);
        yield return Abandon(app);
    }

    /// <summary>Writes the template batch script (run-segment.sh, executable) into a workspace unless one is there.</summary>
    public static void WriteSegmentScript(string workspace)
    {
        var path = Path.Combine(workspace, "run-segment.sh");
        if (!File.Exists(path))
        {
            File.WriteAllText(path, EmbeddedFiles.Read("templates/run-segment.sh"));
            File.SetUnixFileMode(path, (UnixFileMode)Convert.ToInt32("755", 8));
        }
    }

    private static Command Track(CampaignApp app)
    {
        var on = new Option<string?>("--on") { Description = "Run every configuration on this machine instead of the plan's assignment (e.g. a workstation)", HelpName = "MACHINE" };
        var cores = new Option<int?>("--cores") { Description = "Cores per job instead of the plan's", HelpName = "N" };
        var only = new Option<string[]>("--only") { Description = "Only these configuration ids (repeat, or separate with commas)", AllowMultipleArgumentsPerToken = true, HelpName = "ID" };
        var rehearsal = new Option<bool>("--rehearsal") { Description = "A scaled-down rehearsal: finished runs are not written into the run logs" };
        var command = new Command("track", "Start tracking the runs of the current plan (one run per configuration and level)") { on, cores, only, rehearsal };
        app.Bind(command, context =>
        {
            using var workspace = Workspace.Open(context.Workspace, context.Time);
            var plan = PlanStore.Current(workspace.Connection)
                ?? throw new InvalidInputException(new[] { $"{workspace.Root}: no plan yet: expected 'campaign select FILE --save' first" });
            var ids = context.Parse.GetValue(only) is { Length: > 0 } list ? list.SelectMany(e => e.Split(',', StringSplitOptions.TrimEntries | StringSplitOptions.RemoveEmptyEntries)).ToHashSet(StringComparer.Ordinal) : null;
            var coreCount = context.Parse.GetValue(cores);
            if (coreCount is < 1)
            {
                throw new InvalidInputException(new[] { $"--cores = {coreCount}: expected at least 1" });
            }

            var added = Adoption.AddFromPlan(workspace, plan, context.Parse.GetValue(on), coreCount, ids, context.Time, context.Parse.GetValue(rehearsal));
            if (context.Json)
            {
                Json.Write(context.Out, new { PlanId = plan.Id, Added = added.Select(r => new { r.RunId, r.Machine, r.Cores, r.TargetLength }) });
            }
            else
            {
                context.Out.WriteLine($"Tracking {added.Count} new runs from plan {plan.Id}.");
                foreach (var run in added)
                {
                    context.Out.WriteLine($"  {run.RunId} on {run.Machine}, {run.Cores} cores, target {Format.Fixed(run.TargetLength, 0)} M");
                }

                context.Out.WriteLine("Next: campaign tick (one cycle, e.g. from cron) or campaign watch (a daemon).");
            }

            return ExitCodes.Ok;
        });
        return command;
    }

    private static Command Tick(CampaignApp app)
    {
        var command = new Command("tick", "One reconcile cycle: query the batch systems, record, restart, hold, submit; then exit (for cron)");
        app.Bind(command, context =>
        {
            using var workspace = Workspace.Open(context.Workspace, context.Time);
            using var daemonLock = Lock(workspace);
            var report = Reconciler(workspace, context.Time).TickAsync(CancellationToken.None).GetAwaiter().GetResult();
            WriteReport(context, report);
            return ExitCodes.Ok;
        });
        return command;
    }

    private static Command Watch(CampaignApp app)
    {
        var interval = new Option<double?>("--interval") { Description = "Seconds between cycles (default: reconcile_seconds of [tracking])", HelpName = "SECONDS" };
        var untilDone = new Option<bool>("--until-done") { Description = "Stop when no run is active any more" };
        var command = new Command("watch", "Run the tracking daemon in the foreground (Quartz); stops on SIGTERM or Ctrl-C after the current cycle") { interval, untilDone };
        app.Bind(command, context =>
        {
            using var workspace = Workspace.Open(context.Workspace, context.Time);
            using var daemonLock = Lock(workspace);
            var seconds = context.Parse.GetValue(interval) ?? workspace.Config.Tracking.ReconcileSeconds;
            if (!(seconds >= 0.1 && seconds <= 86_400))
            {
                throw new InvalidInputException(new[] { $"--interval = {seconds.ToString(CultureInfo.InvariantCulture)}: expected seconds from 0.1 to 86400" });
            }

            using var stop = new CancellationTokenSource();
            using var term = PosixSignalRegistration.Create(PosixSignal.SIGTERM, c => { c.Cancel = true; stop.Cancel(); });
            using var interrupt = PosixSignalRegistration.Create(PosixSignal.SIGINT, c => { c.Cancel = true; stop.Cancel(); });
            var reconciler = () => Reconciler(workspace, context.Time);
            var log = context.Json ? TextWriter.Null : context.Out;
            log.WriteLine($"Watching {workspace.Root} every {seconds.ToString(CultureInfo.InvariantCulture)} s (Ctrl-C or SIGTERM to stop).");
            WatchHost.RunAsync(
                workspace.Root,
                async token =>
                {
                    try
                    {
                        var report = await reconciler().TickAsync(token).ConfigureAwait(false);
                        log.WriteLine($"{context.Time.GetUtcNow():HH:mm:ss} {Summary(report)}");
                        return report;
                    }
                    catch (Exception e) when (e is BatchSystemException or IOException or Microsoft.Data.Sqlite.SqliteException or InvalidOperationException)
                    {
                        context.Err.WriteLine($"campaign: cycle failed, will try again: {e.Message}");
                        return new TickReport(0, 0, 0, 0, 0, 1, new Dictionary<string, int>(), new[] { e.Message });
                    }
                },
                token =>
                {
                    var runs = TrackingStore.Runs(workspace.Connection);
                    using var tx = workspace.Connection.BeginTransaction();
                    EventLog.Append(workspace.Connection, tx, context.Time, "summary", null, string.Join(", ", runs.GroupBy(r => r.State).Select(g => $"{g.Count()} {g.Key}")));
                    tx.Commit();
                    return Task.CompletedTask;
                },
                TimeSpan.FromSeconds(seconds),
                context.Parse.GetValue(untilDone),
                stop.Token).GetAwaiter().GetResult();
            log.WriteLine("Stopped.");
            if (context.Json)
            {
                WriteStatus(context, workspace, 0);
            }

            return ExitCodes.Ok;
        });
        return command;
    }

    private static Command Status(CampaignApp app)
    {
        var events = new Option<int>("--events") { Description = "Show this many recent run events too (default 0)" };
        var command = new Command("status", "Runs with their state, progress, segments, charge and predicted finish") { events };
        app.Bind(command, context =>
        {
            using var workspace = Workspace.Open(context.Workspace, context.Time);
            var count = context.Parse.GetValue(events);
            if (count < 0)
            {
                throw new InvalidInputException(new[] { $"--events = {count.ToString(System.Globalization.CultureInfo.InvariantCulture)}: expected 0 or more" });
            }

            WriteStatus(context, workspace, count);
            return ExitCodes.Ok;
        });
        return command;
    }

    private static Command Release(CampaignApp app)
    {
        var ids = new Argument<string[]>("RUN") { Description = "Held runs to release", Arity = ArgumentArity.OneOrMore };
        var command = new Command("release", "Let held runs continue (after a human has looked at them)") { ids };
        app.Bind(command, context => ChangeState(context, context.Parse.GetValue(ids)!, RunState.Held, RunState.Planned, "released by a human"));
        return command;
    }

    private static Command Abandon(CampaignApp app)
    {
        var ids = new Argument<string[]>("RUN") { Description = "Runs to give up (their open jobs are cancelled)", Arity = ArgumentArity.OneOrMore };
        var command = new Command("abandon", "Give up runs: cancel their jobs and mark them failed") { ids };
        app.Bind(command, context => ChangeState(context, context.Parse.GetValue(ids)!, null, RunState.Failed, "abandoned by a human"));
        return command;
    }

    private static int ChangeState(CommandContext context, IReadOnlyList<string> ids, RunState? from, RunState to, string why)
    {
        using var workspace = Workspace.Open(context.Workspace, context.Time);
        using var daemonLock = Lock(workspace);
        var runs = TrackingStore.Runs(workspace.Connection).ToDictionary(r => r.RunId);
        var problems = ids.Where(id => !runs.ContainsKey(id)).Select(id => $"{id}: no such tracked run: expected one of {string.Join(", ", runs.Keys.Take(10))}").ToList();
        problems.AddRange(ids.Where(runs.ContainsKey).Where(id => from is not null && runs[id].RunState != from).Select(id => $"{id}: state {runs[id].State}: expected a {from!.Value.Name()} run"));
        if (problems.Count > 0)
        {
            throw new InvalidInputException(problems);
        }

        var batch = BatchSystemFactory.Create(workspace, SelfCommand.Supervisor(), RetryOptions.Default, context.Time);
        var at = context.Time.GetUtcNow().ToString("O", CultureInfo.InvariantCulture);
        foreach (var id in ids)
        {
            var run = runs[id];
            if (to == RunState.Failed)
            {
                foreach (var segment in TrackingStore.SegmentsOf(workspace.Connection, id).Where(s => s.Phase == "submitted" && s.JobId is not null))
                {
                    batch[run.Machine].CancelAsync(segment.JobId!, CancellationToken.None).GetAwaiter().GetResult();
                }
            }

            using var tx = workspace.Connection.BeginTransaction();
            var previous = run.State;
            run.State = to.Name();
            run.Reason = to == RunState.Failed ? why : "";
            run.FailuresWithProgress = 0;
            run.FailuresWithoutProgress = 0;
            run.StallRestarts = 0;
            TrackingStore.Save(workspace.Connection, tx, run, previous, why, at);
            tx.Commit();
            context.Out.WriteLine(context.Json ? "" : $"{id}: {previous} -> {run.State}");
        }

        if (context.Json)
        {
            Json.Write(context.Out, new { Changed = ids, State = to.Name() });
        }

        return ExitCodes.Ok;
    }

    private static DaemonLock Lock(Workspace workspace) =>
        DaemonLock.TryTake(workspace.Root, out var holder)
        ?? throw new InvalidOperationException($"another campaign daemon or command ({holder}) is acting on {workspace.Root}; only one may act at a time");

    private static Reconciler Reconciler(Workspace workspace, TimeProvider time) =>
        new(workspace, BatchSystemFactory.Create(workspace, SelfCommand.Supervisor(), RetryOptions.Default, time), time, SelfCommand.JobEnvironment());

    private static string Summary(TickReport r) =>
        $"{r.Submitted} submitted, {r.Ended} ended, {r.Finished} finished, {r.Held} held, {r.WaitingBudget} waiting for budget, {r.Active} active"
        + (r.Messages.Count > 0 ? "; " + string.Join("; ", r.Messages) : "");

    private static void WriteReport(CommandContext context, TickReport report)
    {
        if (context.Json)
        {
            Json.Write(context.Out, report);
            return;
        }

        context.Out.WriteLine(Summary(report));
    }

    private static void WriteStatus(CommandContext context, Workspace workspace, int events)
    {
        var runs = TrackingStore.Runs(workspace.Connection);
        var segments = TrackingStore.Segments(workspace.Connection).GroupBy(s => s.RunId).ToDictionary(g => g.Key, g => g.OrderBy(s => s.Number).ToList());
        var now = context.Time.GetUtcNow();
        var rows = runs.Select(r =>
        {
            var mine = segments.GetValueOrDefault(r.RunId) ?? new List<Segment>();
            var elapsedHours = mine.Sum(s => s.ElapsedSeconds ?? 0) / 3600 + mine.Where(s => s.Phase == "submitted" && s.JobState == JobState.Running.ToString()).Sum(_ => 0.0);
            var rate = elapsedHours > 0 ? r.ProgressT / elapsedHours : (double?)null;
            DateTimeOffset? finish = rate is > 0 && r.RunState.IsActive() ? now + TimeSpan.FromHours((r.TargetLength - r.ProgressT) / rate.Value) : null;
            return new
            {
                Id = r.RunId,
                State = r.State,
                r.Reason,
                r.Machine,
                r.Cores,
                Progress = r.ProgressT,
                Target = r.TargetLength,
                RateMPerHour = rate,
                PredictedFinish = finish?.ToString("O", CultureInfo.InvariantCulture),
                ChargedCoreHours = mine.Sum(s => s.ChargedCoreHours ?? 0),
                Segments = mine.Select(s => new { s.Number, s.JobId, State = s.Phase == "intent" ? "intent" : s.JobState, s.NativeState, s.ExitCode, s.ElapsedSeconds, s.ChargedCoreHours, s.RestartFrom }).ToList(),
            };
        }).ToList();
        if (context.Json)
        {
            Json.Write(context.Out, new { Runs = rows, Events = events > 0 ? TrackingStore.Events(workspace.Connection).TakeLast(events) : null });
            return;
        }

        if (rows.Count == 0)
        {
            context.Out.WriteLine("No tracked runs. Save a plan with 'campaign select FILE --save', then 'campaign track'.");
            return;
        }

        var table = new TextTable("run", "state", "machine", "progress", "t / target M", "segments", "job", "charged core-h", "M per hour", "predicted finish", "reason");
        foreach (var r in rows)
        {
            var fraction = r.Target > 0 ? Math.Clamp(r.Progress / r.Target, 0, 1) : 0;
            var bar = "[" + new string('#', (int)Math.Round(fraction * 20)).PadRight(20, '.') + "] " + Format.Fixed(fraction * 100, 0).PadLeft(3) + "%";
            var current = r.Segments.LastOrDefault();
            table.Add(
                r.Id,
                r.State,
                r.Machine,
                bar,
                Format.Fixed(r.Progress, 0) + " / " + Format.Fixed(r.Target, 0),
                Format.Integer(r.Segments.Count),
                current is null ? "-" : $"{current.JobId ?? "?"}:{current.State}",
                Format.Fixed(r.ChargedCoreHours, 1),
                r.RateMPerHour is { } rate ? Format.Fixed(rate, 0) : "-",
                r.PredictedFinish is { } f ? DateTimeOffset.Parse(f, CultureInfo.InvariantCulture).ToString("yyyy-MM-dd HH:mm", CultureInfo.InvariantCulture) : "-",
                r.Reason);
        }

        table.WriteTo(context.Out);
        var byState = rows.GroupBy(r => r.State).Select(g => $"{g.Count()} {g.Key}");
        context.Out.WriteLine($"{rows.Count} runs: {string.Join(", ", byState)}; charged so far {Format.Fixed(rows.Sum(r => r.ChargedCoreHours), 1)} core-hours (as the tool counts it; the site's accounting rules).");
        if (events > 0)
        {
            context.Out.WriteLine();
            foreach (var e in TrackingStore.Events(workspace.Connection).TakeLast(events))
            {
                context.Out.WriteLine($"{e.At[..19]}  {e.RunId}  {e.FromState} -> {e.ToState}  {e.Why}");
            }
        }
    }
}
