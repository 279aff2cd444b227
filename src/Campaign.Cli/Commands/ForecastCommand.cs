using System.CommandLine;
using System.Globalization;
using Campaign.Cli.Output;
using Campaign.Core.CostModel;
using Campaign.Core.Domain;
using Campaign.Core.Forecast;
using Campaign.Core.Physics;
using Campaign.Core.Tracking;
using Campaign.Store;

namespace Campaign.Cli.Commands;

/// <summary>campaign forecast: when will the campaign finish, and will the allocation last.</summary>
internal static class ForecastCommand
{
    public static Command Build(CampaignApp app)
    {
        var replicas = new Option<int>("--replicas") { Description = "Monte Carlo replicas (default 2000)", DefaultValueFactory = _ => 2000 };
        var seed = new Option<int>("--seed") { Description = "Seed (default 1)", DefaultValueFactory = _ => 1 };
        var runsShown = new Option<int>("--runs") { Description = "How many runs to list, latest finish first (default 10)", DefaultValueFactory = _ => 10 };
        var command = new Command("forecast", "Simulate the rest of the campaign: finish dates, charge per allocation window, and the chance the plan fits") { replicas, seed, runsShown };
        app.Bind(command, context =>
        {
            var count = context.Parse.GetValue(replicas);
            if (count is < 10 or > 1_000_000)
            {
                throw new InvalidInputException(new[] { $"--replicas = {count}: expected an integer from 10 to 1000000" });
            }

            using var workspace = Workspace.Open(context.Workspace, context.Time);
            var now = context.Time.GetUtcNow();
            var (runs, source) = Runs(workspace);
            var logs = RunLogStore.All(workspace.Connection);
            var failure = FailureProbability(logs);
            var machines = Machines(workspace, now);
            var model = CostModelStore.Latest(workspace.Connection)?.Model;
            ForecastResult result;
            using (var bar = TerminalProgress.For(context, "forecast"))
            {
                result = CampaignForecaster.Run(runs, machines, model, now, new ForecastOptions { Replicas = count, Seed = context.Parse.GetValue(seed), SegmentFailureProbability = failure.Probability }, bar);
            }

            Write(context, result, source, failure, Math.Max(0, context.Parse.GetValue(runsShown)));
            return ExitCodes.Ok;
        });
        return command;
    }

    /// <summary>The runs still to do: the active tracked runs, or, before tracking starts, every run of the plan.</summary>
    internal static (IReadOnlyList<ForecastRun> Runs, string Source) Runs(Workspace workspace)
    {
        var model = CostModelStore.Latest(workspace.Connection)?.Model;
        var tracked = TrackingStore.Runs(workspace.Connection);
        var plan = PlanStore.Current(workspace.Connection);
        if (tracked.Count == 0 && plan is null)
        {
            throw new InvalidInputException(new[] { $"{workspace.Root}: nothing to forecast: expected a plan ('campaign select FILE --save') or tracked runs" });
        }

        ForecastRun Make(string id, string machine, int cores, BinaryConfiguration c, int level, double done, bool active, double? planCost)
        {
            var profile = workspace.Machine(machine);
            var length = SimulatedLength.Estimate(c, workspace.Config.Length).Total;
            if (model is not null)
            {
                var observation = CostObservation.For(id, c, level, cores, profile, length);
                return new ForecastRun(id, machine, cores, model.Features.Row(observation), -Math.Log(profile.RelativeSpeed), null, done, active);
            }

            var consumed = (planCost ?? throw new InvalidInputException(new[] { $"{id}: no cost model and no planned cost: expected 'campaign model fit'" })) / profile.ChargedCoreHours(cores, 1) * cores;
            return new ForecastRun(id, machine, cores, null, 0, consumed, done, active);
        }

        if (tracked.Count > 0)
        {
            var list = tracked.Where(r => r.RunState.IsActive())
                .Select(r => Make(r.RunId, r.Machine, (int)r.Cores, r.Configuration, (int)r.Level, r.TargetLength > 0 ? Math.Min(1, r.ProgressT / r.TargetLength) : 0,
                    r.RunState is RunState.Queued or RunState.Running, PlannedCost(plan, r.ConfigId, (int)r.Level)))
                .ToList();
            return (list, $"{list.Count} active tracked runs");
        }

        var planned = plan!.Runs.SelectMany(p => p.Levels.Select(level => Make(p.ConfigId + ".L" + level.ToString(CultureInfo.InvariantCulture), p.Machine, p.Cores, p.Configuration, level, 0, false, PlannedCost(plan, p.ConfigId, level)))).ToList();
        return (planned, $"plan {plan.Id}: {planned.Count} runs, none started");
    }

    private static double? PlannedCost(Plan? plan, string configId, int level)
    {
        var planned = plan?.Runs.FirstOrDefault(r => r.ConfigId == configId);
        if (planned is null)
        {
            return null;
        }

        var weights = planned.Levels.Select(l => Math.Pow(2, l)).ToList();
        return planned.Median * Math.Pow(2, level) / weights.Sum();
    }

    /// <summary>Share of logged segments that failed: failed and partial runs over all segments logged (0.05 without logs).</summary>
    internal static (double Probability, string Basis) FailureProbability(IReadOnlyList<RunLog> logs)
    {
        if (logs.Count == 0)
        {
            return (0.05, "no run logs: 5% assumed (common practice, order of magnitude)");
        }

        var segments = logs.Sum(l => l.Segments ?? 1);
        var failures = logs.Count(l => l.Outcome != RunOutcome.Completed);
        var p = Math.Clamp((double)failures / segments, 0, 0.5);
        return (p, $"{failures} failed or partial runs over {segments} logged segments");
    }

    internal static IReadOnlyDictionary<string, ForecastMachine> Machines(Workspace workspace, DateTimeOffset now)
    {
        var today = DateOnly.FromDateTime(now.UtcDateTime);
        var segments = TrackingStore.Segments(workspace.Connection);
        var runs = TrackingStore.Runs(workspace.Connection).ToDictionary(r => r.RunId);
        var result = new Dictionary<string, ForecastMachine>(StringComparer.Ordinal);
        foreach (var profile in workspace.Machines.Values)
        {
            var allocation = workspace.Config.Allocations.Where(a => a.Machine == profile.Name && a.End >= today).OrderBy(a => a.Start).FirstOrDefault();
            var already = allocation is null ? 0 : segments
                .Where(s => s.Phase == "ended" && runs.TryGetValue(s.RunId, out var r) && r.Machine == profile.Name && s.EndedAt is not null)
                .Where(s => DateOnly.FromDateTime(DateTimeOffset.Parse(s.EndedAt!, CultureInfo.InvariantCulture).UtcDateTime) is var d && d >= allocation.Start && d <= allocation.End)
                .Sum(s => s.ChargedCoreHours ?? 0);
            var waits = segments
                .Where(s => s.StartedAt is not null && runs.TryGetValue(s.RunId, out var r) && r.Machine == profile.Name)
                .Select(s => (DateTimeOffset.Parse(s.StartedAt!, CultureInfo.InvariantCulture) - DateTimeOffset.Parse(s.SubmittedAt, CultureInfo.InvariantCulture)).TotalHours)
                .Where(h => h >= 0)
                .ToList();
            result[profile.Name] = new ForecastMachine(profile, allocation, already, waits);
        }

        return result;
    }

    private static string Date(DateTimeOffset? d) => d?.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture) ?? "not within";

    private static void Write(CommandContext context, ForecastResult result, string source, (double Probability, string Basis) failure, int shown)
    {
        if (context.Json)
        {
            Json.Write(context.Out, new
            {
                result.Start,
                result.Replicas,
                Source = source,
                SegmentFailureProbability = failure.Probability,
                FailureBasis = failure.Basis,
                Finish = result.Finish,
                result.ProbabilityFits,
                Runs = result.Runs,
                Windows = result.Windows,
                MostLikelyLate = result.MostLikelyLate(5).Select(r => r.Id),
                Caution = "A simulation from stated assumptions: queue behaviour at a real site can differ, and the site's charging rules decide.",
            });
            return;
        }

        var o = context.Out;
        o.WriteLine($"Forecast from {result.Start:yyyy-MM-dd HH:mm} UTC of {source}; {result.Replicas} replicas; segment failure probability {Format.Fixed(failure.Probability * 100, 1)}% ({failure.Basis}).");
        o.WriteLine($"Campaign finishes: P10 {Date(result.Finish.P10)}, P50 {Date(result.Finish.P50)}, P90 {Date(result.Finish.P90)} (\"not within\": fewer replicas than that finished within the allocation).");
        o.WriteLine($"Probability that the plan fits its allocations (every run finished, within charge and end date): {Format.Fixed(result.ProbabilityFits * 100, 1)}%.");
        o.WriteLine();
        if (result.Windows.Count > 0)
        {
            var windows = new TextTable("machine", "window", "granted core-h", "mean charge", "P10 .. P90", "P(over)", "P(>10% unused)");
            foreach (var w in result.Windows)
            {
                windows.Add(w.Machine, $"{w.Start:yyyy-MM-dd}..{w.End:yyyy-MM-dd}", Format.Fixed(w.Amount, 0), Format.Fixed(w.MeanCharge, 0), $"{Format.Fixed(w.P10, 0)} .. {Format.Fixed(w.P90, 0)}",
                    Format.Fixed(w.ProbabilityOver, 2), Format.Fixed(w.ProbabilityUnused, 2));
            }

            windows.WriteTo(o);
            o.WriteLine();
        }

        var late = result.MostLikelyLate(5);
        if (late.Count > 0)
        {
            o.WriteLine("Most likely to be late (finish after the allocation ends, or not at all within it): " + string.Join(", ", late.Select(r => $"{r.Id} ({Format.Fixed(r.ProbabilityLate * 100, r.ProbabilityLate < 0.01 ? 1 : 0)}%)")));
            o.WriteLine();
        }

        var table = new TextTable("run", "machine", "finish P10", "P50", "P90", "P(late)", "segments left");
        foreach (var r in result.Runs.OrderByDescending(r => r.Finish.P90 ?? DateTimeOffset.MaxValue).Take(shown))
        {
            table.Add(r.Id, r.Machine, Date(r.Finish.P10), Date(r.Finish.P50), Date(r.Finish.P90), Format.Fixed(r.ProbabilityLate, 2), Format.Fixed(r.MeanSegments, 1));
        }

        table.WriteTo(o);
        o.WriteLine("A simulation from stated assumptions (docs/forecast.md): queue behaviour at a real site can differ, and the site's charging rules decide.");
    }
}
