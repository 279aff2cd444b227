using System.CommandLine;
using System.Globalization;
using System.Text.Json;
using Campaign.App.Estimates;
using Campaign.App.Forecasts;
using Campaign.App.Logs;
using Campaign.App.Models;
using Campaign.App.Plans;
using Campaign.App.Reports;
using Campaign.App.Runs;
using Campaign.App.Workspaces;
using Campaign.Cli.Output;
using Campaign.Core.Lifecycle;
using Campaign.Core.CostModel;
using Campaign.Core.Domain;
using Campaign.Core.Selection;

namespace Campaign.Cli.Commands;

/// <summary>
/// campaign demo [DIR]: the quick start. Creates a workspace of the invented demo group (config, cluster
/// profiles, run logs, candidate configurations) and runs the whole job that exists so far on it: run lengths,
/// log import, cost-model fit, the proposal estimate and the selection saved as the plan. Later steps of the
/// demo grow here as the tool grows.
/// </summary>
internal static class DemoCommand
{
    /// <summary>
    /// The configurations the demo rehearses: the plan's lowest, middle and highest mass ratio among the
    /// non-precessing ones, and its first precessing one, so the short run still shows the spread of lengths.
    /// </summary>
    internal static IReadOnlyList<string> RehearsalSubset(PlanVersion plan)
    {
        var configurations = plan.Runs.DistinctBy(r => r.ConfigId).ToList();
        var aligned = configurations.Where(r => r.Configuration.IsAligned).OrderBy(r => r.Configuration.Q.Value).ThenBy(r => r.ConfigId, StringComparer.Ordinal).ToList();
        var picks = new List<string>();
        foreach (var index in new[] { 0, aligned.Count / 2, aligned.Count - 1 })
        {
            if (index >= 0 && index < aligned.Count && !picks.Contains(aligned[index].ConfigId))
            {
                picks.Add(aligned[index].ConfigId);
            }
        }

        picks.AddRange(configurations.Where(r => !r.Configuration.IsAligned).Select(r => r.ConfigId).Take(1));
        return picks;
    }

    public static Command Build(CampaignApp app)
    {
        var folder = new Argument<string?>("DIR") { Description = "Folder for the demo workspace (default: a new folder under the system's temporary folder)", Arity = ArgumentArity.ZeroOrOne };
        var force = new Option<bool>("--force") { Description = "Write into a folder that is not empty" };
        var skipRun = new Option<bool>("--skip-run") { Description = "Stop after saving the plan (do not run it on the local runner)" };
        var candidateFile = new Option<string?>("--candidates") { Description = "Use this candidate file instead of the demo group's 120 configurations (copied into the workspace as candidates.csv)", HelpName = "FILE" };
        var command = new Command("demo", "Create the demo workspace (an invented group) and run the whole job on it") { folder, force, skipRun, candidateFile };
        app.Bind(command, context =>
        {
            var target = context.Parse.GetValue(folder) is { } given
                ? app.Resolve(given)
                : Path.Combine(Path.GetTempPath(), "campaign-demo-" + context.Time.GetUtcNow().ToString("yyyyMMdd-HHmmss", CultureInfo.InvariantCulture));
            var demo = EmbeddedFiles.Under("demo/");
            new WorkspaceAdmin(context.Time).Create(target, demo["campaign.toml"], EmbeddedFiles.Under("profiles/"), context.Parse.GetValue(force));
            var candidatesPath = Path.Combine(target, "candidates.csv");
            var logsPath = Path.Combine(target, "run-logs.csv");
            var ownCandidates = context.Parse.GetValue(candidateFile);
            if (ownCandidates is not null && !File.Exists(app.Resolve(ownCandidates)))
            {
                throw new InvalidInputException(new[] { $"--candidates = {ownCandidates}: no such file: expected a candidate file (CSV)" });
            }

            File.WriteAllText(candidatesPath, ownCandidates is null ? demo["candidates.csv"] : File.ReadAllText(app.Resolve(ownCandidates)));
            File.WriteAllText(logsPath, demo["run-logs.csv"]);
            TrackingCommands.WriteLegScript(target);

            // In --json mode every step writes JSON into its own buffer; the demo prints them as one document. For
            // people, long tables go in full into demo-output/ and the terminal shows their head and their totals.
            var steps = new Dictionary<string, StringWriter>();
            var outputs = Path.Combine(target, "demo-output");
            Directory.CreateDirectory(outputs);
            CommandContext Step(string name, bool live = false)
            {
                if (live && !context.Json)
                {
                    return context;
                }

                // A step's text is laid out as a command's would be (prose wrapped, tables within the width), then
                // shown as it is.
                steps[name] = new StringWriter();
                return context with { Out = context.Json ? steps[name] : new WrappingWriter(steps[name], Screen.Width) };
            }

            void Show(string name, int head = 0, Func<string, bool>? tailFrom = null)
            {
                var text = steps[name].ToString();
                if (context.Json)
                {
                    return;
                }

                var shown = WrappingWriter.Unwrapped(context.Out);

                var file = Path.Combine(outputs, name + ".txt");
                File.WriteAllText(file, text);
                var lines = text.TrimEnd('\n').Split('\n');
                var tail = tailFrom is null || head >= lines.Length ? -1 : Array.FindIndex(lines, head, l => tailFrom(l));
                if (tail < 0 || tail <= head + 3)
                {
                    shown.Write(text);
                    return;
                }

                foreach (var line in lines.Take(head))
                {
                    shown.WriteLine(line);
                }

                shown.WriteLine($"  ... {tail - head} more lines: {file}");
                foreach (var line in lines.Skip(tail))
                {
                    shown.WriteLine(line);
                }
            }

            var o = context.Json ? TextWriter.Null : context.Out;
            o.WriteLine($"Demo workspace: {target}");
            o.WriteLine("  an invented group's config, cluster profiles, past runs (run-logs.csv) and planned runs (candidates.csv)");
            o.WriteLine();

            var (config, clusters) = WorkspaceAdmin.Settings(target);
            var time = context.Time;
            o.WriteLine("== 1. How long must each planned run be? (post-Newtonian inspiral + merger + ringdown)");
            var lengths = LengthCommand.ForFile(candidatesPath, "candidates.csv", config.Length, config.Defaults, config.DefaultCluster, clusters.Keys.ToList());
            LengthCommand.Write(Step("lengths"), lengths, config.Length);
            Show("lengths", 10, l => !l.StartsWith("sm-", StringComparison.Ordinal));
            o.WriteLine();

            o.WriteLine("== 2. Import the group's past runs");
            var imported = new RunLogService(time).Import(new ImportLogsRequest(target, logsPath, "run-logs.csv", Replace: false));
            o.WriteLine($"run-logs.csv: {Format.Count(imported.Added, "run")} imported; {Format.Integer(imported.Total)} in the workspace.");
            o.WriteLine();

            o.WriteLine("== 3. Fit the cost model to them");
            var model = new CostModelService(time).Fit(target, new CostFitOptions { Robust = true });
            ModelCommand.Write(Step("model"), model.Id, model.FittedAt, model.Model);
            Show("model");
            o.WriteLine();

            o.WriteLine("== 4. Estimate the proposal: core-hours, wall time, legs, charges and storage per run and level");
            var estimateOptions = new EstimateOptions { EccentricityTrials = 2 };
            var estimate = new EstimateService(time).Estimate(new EstimateRequest(target, candidatesPath, "candidates.csv", estimateOptions));
            EstimateCommand.Write(Step("estimate"), estimate, "candidates.csv", "table");
            Show("estimate", 14, l => !l.StartsWith("sm-", StringComparison.Ordinal));
            if (!context.Json)
            {
                var proposal = new StringWriter();
                EstimateCommand.Write(context with { Out = proposal }, estimate, "candidates.csv", "md");
                File.WriteAllText(Path.Combine(target, "proposal.md"), proposal.ToString());
                o.WriteLine($"The proposal table in Markdown: {Path.Combine(target, "proposal.md")}");
            }

            o.WriteLine();

            o.WriteLine("== 5. Choose what to run within the allocations (coverage of the parameter space, costs at the 80th percentile) and save the plan");
            var selected = new PlanService(time).Select(new SelectRequest(target, candidatesPath, "candidates.csv", SelectionObjective.Coverage, null, 0.8, Array.Empty<string>(), null, 2, 1500, 10, Save: true));
            SelectCommand.Write(Step("select"), selected);
            Show("select", 16, l => l.StartsWith("cluster ", StringComparison.Ordinal));
            o.WriteLine();

            // A plan changes over a year: here the two chosen configurations that add the least coverage turn out to
            // be covered by a collaboration, and the group re-plans without them (nothing has started, so nothing is
            // carried; what the budget frees may buy others).
            var covered = selected.Report.Chosen.Where(c => !c.Must).OrderBy(c => c.Gain).ThenBy(c => c.Id, StringComparer.Ordinal).Take(2).Select(c => c.Id).ToList();
            o.WriteLine($"== 5b. A collaboration already has {string.Join(" and ", covered)}: re-plan without them, and compare the two plan versions");
            new PlanService(time).Select(new SelectRequest(target, candidatesPath, "candidates.csv", SelectionObjective.Coverage, null, 0.8, covered, null, 2, 1500, 10, Save: true));
            PlanCommand.WriteDiff(Step("plan_diff"), new PlanViews(time).Compare(target, null, null));
            Show("plan_diff", 14, l => l.StartsWith("cluster ", StringComparison.Ordinal));
            o.WriteLine();

            o.WriteLine("== 6. Forecast: when will it finish, and will the allocation last?");
            ForecastCommand.Write(Step("forecast"), new ForecastService(time).Forecast(new ForecastRequest(target, 1000, 1)), 5);
            Show("forecast");
            o.WriteLine();

            if (!context.Parse.GetValue(skipRun))
            {
                o.WriteLine("== 7. Rehearse part of the plan, scaled down, on this computer's local runner (demo payload; seconds instead of weeks)");
                var plan = new PlanService(time).Current(target)!;
                var chosen = RehearsalSubset(plan);
                o.WriteLine($"{chosen.Count} of the plan's {Format.Count(plan.ConfigIds.Count, "configuration")}, every resolution, to keep the demo short: {string.Join(", ", chosen)}.");
                o.WriteLine("A rehearsal's runs are its own: the plan's runs stay to do, and the rehearsal's costs stay out of the run logs.");
                var tracked = new TrackService(time).Track(new TrackRequest(target, "workbench", 1, chosen.ToHashSet(StringComparer.Ordinal), Rehearsal: true));
                TrackingCommands.WriteTracked(Step("track"), tracked, rehearsal: true);
                Show("track");

                // One run is made to go bad on purpose (its constraint norm grows exponentially), to show the tracker
                // holding it with a reason instead of burning more time on it.
                var unlucky = tracked.Added.Where(r => r.ConfigId == chosen[Math.Min(1, chosen.Count - 1)]).MaxBy(r => r.Level)!;
                File.WriteAllText(Path.Combine(tracked.Folders[unlucky.RunId], "payload.json"), "{\"instability_rate\": 0.02}");
                o.WriteLine($"(The demo payload of {unlucky.RunId} is set to go unstable: watch it being held.)");
                var runs = new RunService(time, TrackingCommands.Batch());
                var log = context.Json ? TextWriter.Null : context.Out;
                runs.Watch(new WatchRequest(target, 1, UntilDone: true), log.WriteLine, context.Err.WriteLine, CancellationToken.None);
                TrackingCommands.WriteStatus(Step("status"), new StatusService(time).Status(target, 0));
                Show("status");
                o.WriteLine();
            }

            o.WriteLine("== 8. The report: plots and tables for the group and the review panel");
            var report = new ReportService(time).Write(new ReportRequest(target, Path.Combine(target, "report"), candidatesPath, "candidates.csv", 1000));
            var reportStep = Step("report");
            if (context.Json)
            {
                Json.Write(reportStep.Out, new { report.Report, report.Files });
            }
            else
            {
                reportStep.Out.WriteLine($"Report: {report.Report} ({report.Files.Count - 1} plot files beside it)");
            }

            Show("report");
            o.WriteLine();

            if (context.Json)
            {
                Json.Write(context.Out, new
                {
                    Workspace = target,
                    Steps = steps.ToDictionary(s => s.Key, s => JsonDocument.Parse(s.Value.ToString()).RootElement),
                });
                return ExitCodes.Ok;
            }

            o.WriteLine($"Open {Path.Combine(target, "report", "report.html")} in a browser.");
            o.WriteLine("Explore it:");
            var commands = WrappingWriter.Unwrapped(o); // commands to copy stay on one line each
            commands.WriteLine($"  ./campaign --dir {target} check");
            commands.WriteLine($"  ./campaign --dir {target} model show");
            commands.WriteLine($"  ./campaign --dir {target} plan show");
            commands.WriteLine($"  ./campaign --dir {target} plan diff 1 2");
            commands.WriteLine($"  ./campaign --dir {target} estimate {candidatesPath} --format md");
            commands.WriteLine($"  ./campaign --dir {target} select {candidatesPath} --objective value --budget 2M");
            commands.WriteLine($"  ./campaign --dir {target} length --q 4 --chi1z 0.5 --omega0 0.016");
            return ExitCodes.Ok;
        });
        return command;
    }
}
