using System.CommandLine;
using System.Globalization;
using Campaign.Cli.Output;
using Campaign.Core.Configuration;
using Campaign.Core.CostModel;
using Campaign.Core.Domain;
using Campaign.Core.Forecast;
using Campaign.Reports;
using Campaign.Store;

namespace Campaign.Cli.Commands;

/// <summary>campaign report --out FOLDER: the HTML report with its plots (PNG and SVG).</summary>
internal static class ReportCommand
{
    public static Command Build(CampaignApp app)
    {
        var output = new Option<string>("--out") { Description = "Folder to write report.html and the plots into", Required = true, HelpName = "FOLDER" };
        var candidates = new Option<string?>("--candidates") { Description = "Candidate file, for the coverage map and the proposal table (default: the plan's runs)", HelpName = "FILE" };
        var replicas = new Option<int>("--replicas") { Description = "Forecast replicas (default 1000)", DefaultValueFactory = _ => 1000 };
        var command = new Command("report", "Write a self-contained HTML report: burn-down, run progress, coverage map, cost-model check, proposal table") { output, candidates, replicas };
        app.Bind(command, context =>
        {
            var replicaCount = context.Parse.GetValue(replicas);
            if (replicaCount is < 10 or > 100_000)
            {
                throw new InvalidInputException(new[] { $"--replicas = {replicaCount.ToString(CultureInfo.InvariantCulture)}: expected an integer from 10 to 100000" });
            }

            using var workspace = Workspace.Open(context.Workspace, context.Time);
            var config = workspace.Config;
            var now = context.Time.GetUtcNow();
            var model = CostModelStore.Latest(workspace.Connection)?.Model;
            var plan = PlanStore.Current(workspace.Connection);
            var logs = RunLogStore.All(workspace.Connection);
            var tracked = TrackingStore.Runs(workspace.Connection);
            var segments = TrackingStore.Segments(workspace.Connection);

            ForecastResult? forecast = null;
            if (plan is not null || tracked.Count > 0)
            {
                var (runs, _) = ForecastCommand.Runs(workspace);
                var machines = ForecastCommand.Machines(workspace, now);
                forecast = CampaignForecaster.Run(runs, machines, model, now, new ForecastOptions { Replicas = replicaCount, SegmentFailureProbability = ForecastCommand.FailureProbability(logs).Probability });
            }

            var runsById = tracked.ToDictionary(r => r.RunId);
            var charges = segments.Where(s => s.Phase == "ended" && s.EndedAt is not null && runsById.ContainsKey(s.RunId))
                .Select(s => new ChargePoint(runsById[s.RunId].Machine, DateTimeOffset.Parse(s.EndedAt!, CultureInfo.InvariantCulture), s.ChargedCoreHours ?? 0)).ToList();
            var allocations = config.Allocations.Select(a => new AllocationLine(
                a.Machine,
                new DateTimeOffset(a.Start.ToDateTime(TimeOnly.MinValue), TimeSpan.Zero),
                new DateTimeOffset(a.End.ToDateTime(TimeOnly.MaxValue), TimeSpan.Zero),
                a.CoreHours(workspace.Machine(a.Machine)),
                plan?.Runs.Where(r => r.Machine == a.Machine).Sum(r => r.Median) ?? 0)).ToList();
            var progress = tracked.Select(r =>
            {
                var points = segments.Where(s => s.RunId == r.RunId).OrderBy(s => s.Number)
                    .Select(s => (DateTimeOffset.Parse(s.SubmittedAt, CultureInfo.InvariantCulture), s.StartT)).ToList();
                points.Add((r.FinishedAt is { } f ? DateTimeOffset.Parse(f, CultureInfo.InvariantCulture) : now, r.ProgressT));
                return new ProgressLine(r.RunId, r.TargetLength, points);
            }).ToList();

            List<Candidate> candidateList = new();
            if (context.Parse.GetValue(candidates) is { } file)
            {
                var path = app.Resolve(file);
                if (!File.Exists(path))
                {
                    throw new InvalidInputException(new[] { $"{file}: no such file: expected a candidate file (CSV)" });
                }

                candidateList = CandidateReader.Read(Campaign.Core.Text.StrictUtf8.Decode(File.ReadAllBytes(path), file), file, config.Length, config.Defaults, config.DefaultMachine, workspace.Machines.Keys.ToList()).ToList();
            }

            static CoveragePoint Point(BinaryConfiguration c) => new(c.Q.Value, c.ChiEffective);
            var proposal = new List<ProposalRow>();
            if (candidateList.Count > 0 && (model is not null || candidateList.All(c => c.CoreHours is not null)))
            {
                var training = TrainingSet.From(logs, workspace.Machines, config.Length);
                var estimate = ProposalEstimator.Estimate(candidateList, workspace.Machines, model, StorageModel.Fit(training.Lengths), config.Length, new EstimateOptions { Samples = 200 });
                proposal = estimate.Runs.Select(r => new ProposalRow(r.Id + (r.Kind == "ecc" ? " (trials)" : ""), r.Level, r.Machine, r.Median, r.Low, r.High, r.ChargedCoreHours, r.Segments)).ToList();
            }
            else if (plan is not null)
            {
                proposal = plan.Runs.Select(r => new ProposalRow(r.ConfigId, r.Levels.Max(), r.Machine, r.Median, r.Median, r.High, r.Cost, 0)).ToList();
            }

            var modelCheck = new List<ModelCheckPoint>();
            if (model is not null)
            {
                var training = TrainingSet.From(logs, workspace.Machines, config.Length);
                for (var i = 0; i < training.Observations.Count; i++)
                {
                    var p = model.Predict(training.Observations[i], 0.9);
                    modelCheck.Add(new ModelCheckPoint(p.Median, p.Low, p.High, training.CoreHours[i], runsById.ContainsKey(training.Observations[i].Id)));
                }
            }

            var data = new ReportData(
                config.Name,
                now,
                allocations,
                charges,
                forecast,
                progress,
                candidateList.Select(c => Point(c.Spec.Configuration)).ToList(),
                plan?.Runs.Select(r => Point(r.Configuration)).ToList() ?? new List<CoveragePoint>(),
                tracked.Where(r => r.State == "finished").Select(r => Point(r.Configuration)).Distinct().ToList(),
                logs.Where(l => l.Outcome == RunOutcome.Completed).Select(l => Point(l.Configuration)).Distinct().ToList(),
                modelCheck,
                proposal);
            var folder = app.Resolve(context.Parse.GetValue(output)!);
            var files = ReportWriter.Write(data, folder);
            if (context.Json)
            {
                Json.Write(context.Out, new { Report = Path.Combine(folder, "report.html"), Files = files });
            }
            else
            {
                context.Out.WriteLine($"Report: {Path.Combine(folder, "report.html")} ({files.Count - 1} plot files beside it)");
            }

            return ExitCodes.Ok;
        });
        return command;
    }
}
