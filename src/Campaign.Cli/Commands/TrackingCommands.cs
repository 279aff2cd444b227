using System.CommandLine;
using System.Globalization;
using System.Runtime.InteropServices;
using Campaign.App.Runs;
using Campaign.Batch;
using Campaign.Cli.Output;
using Campaign.Core.Domain;
using Campaign.Core.Tracking;
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

    /// <summary>Writes the template batch script (run-leg.sh, executable) into a workspace unless one is there.</summary>
    public static void WriteLegScript(string workspace)
    {
        var path = Path.Combine(workspace, "run-leg.sh");
        if (!File.Exists(path))
        {
            File.WriteAllText(path, EmbeddedFiles.Read("templates/run-leg.sh"));
            File.SetUnixFileMode(path, (UnixFileMode)Convert.ToInt32("755", 8));
        }
    }

    /// <summary>The real batch systems, with this executable hosting the local runner's supervisors.</summary>
    public static BatchAccess Batch() => BatchAccess.Real(SelfCommand.Supervisor(), SelfCommand.JobEnvironment());

    private static Command Track(CampaignApp app)
    {
        var on = new Option<string?>("--on") { Description = "Run every configuration on this cluster instead of the plan's assignment (e.g. a workstation)", HelpName = "CLUSTER" };
        var cores = new Option<int?>("--cores") { Description = "Cores per job instead of the plan's", HelpName = "N" };
        var only = new Option<string[]>("--only") { Description = "Only these configuration ids of the plan (repeat, or separate with commas)", AllowMultipleArgumentsPerToken = true, HelpName = "ID" };
        var rehearsal = new Option<bool>("--rehearsal") { Description = "A rehearsal: runs of their own (ids end .r1, .r2 ...) that never count as plan runs done and never feed the run logs" };
        var command = new Command("track", "Start tracking the runs of the current plan (one run per configuration and level)") { on, cores, only, rehearsal };
        app.Bind(command, context =>
        {
            var ids = context.Parse.GetValue(only) is { Length: > 0 } list ? list.SelectMany(e => e.Split(',', StringSplitOptions.TrimEntries | StringSplitOptions.RemoveEmptyEntries)).ToHashSet(StringComparer.Ordinal) : null;
            var result = new TrackService(context.Time).Track(new TrackRequest(context.Workspace, context.Parse.GetValue(on), context.Parse.GetValue(cores), ids, context.Parse.GetValue(rehearsal)));
            WriteTracked(context, result, context.Parse.GetValue(rehearsal));
            return ExitCodes.Ok;
        });
        return command;
    }

    /// <summary>Writes what track added.</summary>
    public static void WriteTracked(CommandContext context, TrackResult result, bool rehearsal)
    {
        if (context.Json)
        {
            Json.Write(context.Out, new { result.PlanId, Added = result.Added.Select(r => new { r.RunId, r.Cluster, r.Cores, r.TargetLength, r.Rehearsal }), result.AlreadyTracked });
            return;
        }

        var kind = rehearsal ? "rehearsal runs" : "new runs";
        context.Out.WriteLine($"Tracking {result.Added.Count} {kind} from plan {result.PlanId}{(result.AlreadyTracked.Count > 0 ? $" ({result.AlreadyTracked.Count} already tracked)" : "")}.");
        foreach (var run in result.Added)
        {
            context.Out.WriteLine($"  {run.RunId} on {run.Cluster}, {Format.Count(run.Cores, "core")}, target {Format.Fixed(run.TargetLength, 0)} M");
        }

        context.Out.WriteLine("Next: campaign tick (one cycle, e.g. from cron) or campaign watch (a daemon).");
    }

    private static Command Tick(CampaignApp app)
    {
        var command = new Command("tick", "One reconcile cycle: query the batch systems, record, restart, hold, submit; then exit (for cron)");
        app.Bind(command, context =>
        {
            var report = new RunService(context.Time, Batch()).Cycle(context.Workspace);
            if (context.Json)
            {
                Json.Write(context.Out, report);
            }
            else
            {
                context.Out.WriteLine(RunService.Summary(report));
            }

            return ExitCodes.Ok;
        });
        return command;
    }

    private static Command Watch(CampaignApp app)
    {
        var interval = new Option<double?>("--interval") { Description = "Seconds between cycles (default: reconcile_seconds of [tracking])", HelpName = "SECONDS" };
        var untilDone = new Option<bool>("--until-done") { Description = "Stop when no run is active any more" };
        var command = new Command("watch", "Run the tracking daemon in the foreground: a reconcile cycle every interval and a daily summary; stops on SIGTERM or Ctrl-C after the current cycle") { interval, untilDone };
        app.Bind(command, context =>
        {
            using var stop = new CancellationTokenSource();
            using var term = PosixSignalRegistration.Create(PosixSignal.SIGTERM, c => { c.Cancel = true; stop.Cancel(); });
            using var interrupt = PosixSignalRegistration.Create(PosixSignal.SIGINT, c => { c.Cancel = true; stop.Cancel(); });
            var log = context.Json ? TextWriter.Null : context.Out;
            new RunService(context.Time, Batch()).Watch(new WatchRequest(context.Workspace, context.Parse.GetValue(interval), context.Parse.GetValue(untilDone)), log.WriteLine, context.Err.WriteLine, stop.Token);
            log.WriteLine("Stopped.");
            if (context.Json)
            {
                WriteStatus(context, new StatusService(context.Time).Status(context.Workspace, 0));
            }

            return ExitCodes.Ok;
        });
        return command;
    }

    private static Command Status(CampaignApp app)
    {
        var events = new Option<int>("--events") { Description = "Show this many recent run events too (default 0)" };
        var command = new Command("status", "Runs with their state, progress, legs, charge and predicted finish; the plan's standing and clusters at fault") { events };
        app.Bind(command, context =>
        {
            var count = context.Parse.GetValue(events);
            if (count < 0)
            {
                throw new InvalidInputException(new[] { $"--events = {count.ToString(CultureInfo.InvariantCulture)}: expected 0 or more" });
            }

            WriteStatus(context, new StatusService(context.Time).Status(context.Workspace, count));
            return ExitCodes.Ok;
        });
        return command;
    }

    private static Command Release(CampaignApp app)
    {
        var (ids, match, state) = SelectionOptions("Held runs to release");
        var command = new Command("release", "Let held runs continue (after a human has looked at them): by id, or every held run matching --match / --state") { ids, match, state };
        app.Bind(command, context =>
            Write(context, new RunService(context.Time, Batch()).Release(Selection(context, ids, match, state)), "released"));
        return command;
    }

    private static Command Abandon(CampaignApp app)
    {
        var (ids, match, state) = SelectionOptions("Runs to give up (their open jobs are cancelled)");
        var command = new Command("abandon", "Give up runs: cancel their jobs and mark them failed; by id, or every run matching --match / --state") { ids, match, state };
        app.Bind(command, context =>
            Write(context, new RunService(context.Time, Batch()).Abandon(Selection(context, ids, match, state)), "abandoned"));
        return command;
    }

    private static (Argument<string[]> Ids, Option<string?> Match, Option<string?> State) SelectionOptions(string what)
    {
        var ids = new Argument<string[]>("RUN") { Description = what, Arity = ArgumentArity.ZeroOrMore };
        var match = new Option<string?>("--match") { Description = "Every run whose id matches this pattern ('*' any characters, '?' one; quote it)", HelpName = "PATTERN" };
        var state = new Option<string?>("--state") { Description = "Every run in this state", HelpName = "STATE" };
        Choices.Restrict(state, Enum.GetValues<RunState>().Select(s => s.Name()).ToArray());
        return (ids, match, state);
    }

    private static RunSelection Selection(CommandContext context, Argument<string[]> ids, Option<string?> match, Option<string?> state) =>
        new(context.Workspace, context.Parse.GetValue(ids) ?? Array.Empty<string>(), context.Parse.GetValue(match), context.Parse.GetValue(state) is { } s ? RunStates.Parse(s) : null);

    private static int Write(CommandContext context, IReadOnlyList<RunChange> changes, string verb)
    {
        if (context.Json)
        {
            Json.Write(context.Out, new { Changed = changes.Select(c => new { c.RunId, From = c.From.Name(), To = c.To.Name() }) });
            return ExitCodes.Ok;
        }

        foreach (var c in changes)
        {
            context.Out.WriteLine($"{c.RunId}: {c.From.Name()} -> {c.To.Name()}");
        }

        context.Out.WriteLine($"{Format.Count(changes.Count, "run")} {verb}.");
        return ExitCodes.Ok;
    }

    /// <summary>Writes the status.</summary>
    public static void WriteStatus(CommandContext context, StatusResult status)
    {
        var now = context.Time.GetUtcNow();
        if (context.Json)
        {
            Json.Write(context.Out, new
            {
                LastCycle = status.LastCycle?.ToString("O", CultureInfo.InvariantCulture),
                Plan = status.Plan,
                ClusterFaults = status.ClusterFaults.Select(f => new { f.Cluster, Since = f.Since.ToString("O", CultureInfo.InvariantCulture), LastAt = f.LastAt.ToString("O", CultureInfo.InvariantCulture), f.Message }),
                Sites = status.Sites.Select(s => new { s.Cluster, s.Site, s.LoginHost, LastReached = s.LastReached?.ToString("O", CultureInfo.InvariantCulture), s.LastError }),
                Runs = status.Runs.Select(v => new
                {
                    Id = v.Run.RunId,
                    State = v.Run.State.Name(),
                    v.Run.Reason,
                    v.Run.Cluster,
                    BatchSystem = status.BatchSystems.GetValueOrDefault(v.Run.Cluster), // whose words native_state is
                    v.Run.Cores,
                    v.Run.Rehearsal,
                    Progress = v.Run.Progress,
                    Target = v.Run.TargetLength,
                    v.RateMPerHour,
                    PredictedFinish = v.PredictedFinish?.ToString("O", CultureInfo.InvariantCulture),
                    v.ChargedCoreHours,
                    v.Legs,
                }),
                Events = status.Events.Count > 0 ? status.Events : null,
            });
            return;
        }

        var o = context.Out;
        o.WriteLine(status.LastCycle is { } last
            ? $"As of the last cycle at {last.ToString("yyyy-MM-dd HH:mm:ss", CultureInfo.InvariantCulture)} UTC ({Ago(now - last)} ago)."
            : "No cycle has run yet: states are as recorded, not yet checked with any batch system ('campaign tick' or 'campaign watch').");
        foreach (var f in status.ClusterFaults)
        {
            o.WriteLine($"Cluster {f.Cluster} unreachable since {f.Since.ToString("yyyy-MM-dd HH:mm", CultureInfo.InvariantCulture)} UTC (last tried {Ago(now - f.LastAt)} ago): {f.Message}. Its runs are left as they were.");
        }

        if (status.Sites.Any(s => s.LoginHost is not null))
        {
            // A campaign across sites: where each cluster is, when it last answered, what failed last.
            var sites = new TextTable("cluster", "site", "login host", "last reached", "last error").Wrap("last error");
            foreach (var s in status.Sites)
            {
                sites.Add(s.Cluster, s.Site, s.LoginHost ?? "-", s.LastReached is { } r ? $"{Ago(now - r)} ago" : "never", s.LastError is { } e ? Campaign.Batch.BatchErrorText.FirstLine(e) : "-");
            }

            sites.WriteTo(o);
            o.WriteLine();
        }

        if (status.Plan is { } p)
        {
            o.WriteLine($"Plan {p.PlanId}: {Format.Count(p.ToCome, "run")} to come, {p.Active} active, {p.Held} held, {p.Finished} finished, {p.Abandoned} given up{(p.Rehearsals > 0 ? $"; {Format.Count(p.Rehearsals, "rehearsal run")} beside it" : "")}.");
        }

        if (status.Runs.Count == 0)
        {
            o.WriteLine("No tracked runs. Save a plan with 'campaign select FILE --save', then 'campaign track'.");
            return;
        }

        o.WriteLine();
        var table = context.Detail
            ? new TextTable("run", "state", "cluster", "progress", "t / target M", "legs", "job", "batch system says", "charged core-h", "M per hour", "predicted finish", "reason")
            : new TextTable("run", "state", "cluster", "progress", "legs", "core-h", "finish", "note");
        var cut = false;
        table.Wrap(context.Detail ? "reason" : "note");
        foreach (var v in status.Runs)
        {
            var r = v.Run;
            var fraction = r.DoneFraction;
            var bar = "[" + new string('#', (int)Math.Round(fraction * 8)).PadRight(8, '.') + "] " + Format.Fixed(fraction * 100, 0).PadLeft(3) + "%";
            var current = v.Legs.LastOrDefault();
            var reason = BatchErrorText.FirstLine(r.Reason);
            if (!context.Detail)
            {
                table.Add(r.RunId, r.State.Name(), r.Cluster, bar, Format.Integer(v.Legs.Count), Format.Fixed(v.ChargedCoreHours, 1),
                    v.PredictedFinish is { } day ? day.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture) : "-", Format.Cut(reason, 44));
                cut |= reason.Length > 44;
                continue;
            }

            var job = current is null ? "-" : $"{current.JobId ?? "?"} {current.State.Replace('_', ' ')}";
            var native = current is null || current.NativeState.Length == 0 ? "-" : $"{status.BatchSystems.GetValueOrDefault(r.Cluster, "batch system")} {current.NativeState}";
            if (current is not null && JobStates.Exit(current.ExitCode, current.Signal) is { Length: > 0 } exit)
            {
                native += ", " + exit;
            }

            table.Add(
                r.RunId,
                r.State.Name(),
                r.Cluster,
                bar,
                Format.Fixed(r.Progress, 0) + " / " + Format.Fixed(r.TargetLength, 0),
                Format.Integer(v.Legs.Count),
                job,
                native,
                Format.Fixed(v.ChargedCoreHours, 1),
                v.RateMPerHour is { } rate ? Format.Fixed(rate, 0) : "-",
                v.PredictedFinish is { } f ? f.ToString("yyyy-MM-dd HH:mm", CultureInfo.InvariantCulture) : "-",
                reason);
        }

        table.WriteTo(o);
        var byState = status.Runs.GroupBy(r => r.Run.State).Select(g => $"{Format.Integer(g.Count())} {g.Key.Name()}");
        o.WriteLine($"{Format.Count(status.Runs.Count, "run")}: {string.Join(", ", byState)}; charged so far {Format.Fixed(status.Runs.Sum(r => r.ChargedCoreHours), 1)} core-hours as the tool counts it (the site's accounting decides).");
        if (cut)
        {
            o.WriteLine("Long notes are cut: --detail (or --json) shows them whole, with each run's job and its batch system's own state.");
        }

        if (status.Events.Count > 0)
        {
            o.WriteLine();
            var events = new TextTable("at (UTC)", "run", "change", "why").Wrap("why");
            foreach (var e in status.Events)
            {
                events.Add(e.At[..19].Replace('T', ' '), e.RunId, $"{e.FromState} -> {e.ToState}", e.Why);
            }

            events.WriteTo(o);
        }
    }

    private static string Ago(TimeSpan span) =>
        span.TotalMinutes < 1 ? $"{Format.Fixed(Math.Max(0, span.TotalSeconds), 0)} s"
        : span.TotalHours < 2 ? $"{Format.Fixed(span.TotalMinutes, 0)} min"
        : span.TotalDays < 2 ? $"{Format.Fixed(span.TotalHours, 1)} h"
        : $"{Format.Fixed(span.TotalDays, 1)} days";
}
