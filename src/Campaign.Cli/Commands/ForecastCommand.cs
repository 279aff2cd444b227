using System.CommandLine;
using System.Globalization;
using Campaign.App.Forecasts;
using Campaign.Cli.Output;

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
            ForecastOutcome outcome;
            using (var bar = TerminalProgress.For(context, "forecast"))
            {
                outcome = new ForecastService(context.Time).Forecast(new ForecastRequest(context.Workspace, context.Parse.GetValue(replicas), context.Parse.GetValue(seed)), bar);
            }

            Write(context, outcome, Math.Max(0, context.Parse.GetValue(runsShown)));
            return ExitCodes.Ok;
        });
        return command;
    }

    private static string Date(DateTimeOffset? d) => d?.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture) ?? "not within";

    /// <summary>Writes a forecast.</summary>
    public static void Write(CommandContext context, ForecastOutcome outcome, int shown)
    {
        var (result, source, failure) = (outcome.Result, outcome.Source, (Probability: outcome.FailureProbability, Basis: outcome.FailureBasis));
        if (context.Json)
        {
            Json.Write(context.Out, new
            {
                result.Start,
                result.Replicas,
                Source = source,
                outcome.RunsLeft,
                LegFailureProbability = failure.Probability,
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
        if (context.Detail)
        {
            o.WriteLine($"Forecast from {result.Start:yyyy-MM-dd HH:mm} UTC of {source}; {result.Replicas} replicas; leg failure probability {Format.Fixed(failure.Probability * 100, 1)}% ({failure.Basis}).");
            o.WriteLine($"Campaign finishes: P10 {Date(result.Finish.P10)}, P50 {Date(result.Finish.P50)}, P90 {Date(result.Finish.P90)} (\"not within\": fewer replicas than that finished within the allocation).");
            o.WriteLine($"Probability that the plan fits its allocations (every run finished, within charge and end date): {Format.Fixed(result.ProbabilityFits * 100, 1)}%.");
        }
        else
        {
            o.WriteLine($"Forecast of {source}, from {result.Start:yyyy-MM-dd}.");
            o.WriteLine($"Finishes {Date(result.Finish.P50)} (P10 {Date(result.Finish.P10)}, P90 {Date(result.Finish.P90)}); chance the plan fits its allocations: {Format.Fixed(result.ProbabilityFits * 100, 1)}%.");
        }

        o.WriteLine();
        if (result.Windows.Count > 0)
        {
            var windows = context.Detail
                ? new TextTable("cluster", "window", "granted core-h", "mean charge", "P10 .. P90", "P(over)", "P(>10% unused)")
                : new TextTable("cluster", "window", "granted", "charge P10 .. P90", "P(over)", "P(>10% unused)");
            foreach (var w in result.Windows)
            {
                var window = $"{w.Start:yyyy-MM-dd} .. {w.End:yyyy-MM-dd}";
                var band = $"{Format.Fixed(w.P10, 0)} .. {Format.Fixed(w.P90, 0)}";
                if (context.Detail)
                {
                    windows.Add(w.Cluster, window, Format.Fixed(w.Amount, 0), Format.Fixed(w.MeanCharge, 0), band, Format.Fixed(w.ProbabilityOver, 2), Format.Fixed(w.ProbabilityUnused, 2));
                }
                else
                {
                    windows.Add(w.Cluster, window, Format.Fixed(w.Amount, 0), band, Format.Fixed(w.ProbabilityOver, 2), Format.Fixed(w.ProbabilityUnused, 2));
                }
            }

            windows.WriteTo(o);
            o.WriteLine();
        }

        var late = result.MostLikelyLate(5);
        if (late.Count > 0)
        {
            o.WriteLine("Most likely to be late (after the allocation ends, or not within it): " + string.Join(", ", late.Select(r => $"{r.Id} ({Format.Fixed(r.ProbabilityLate * 100, r.ProbabilityLate < 0.01 ? 1 : 0)}%)")));
            o.WriteLine();
        }

        var table = new TextTable("run", "cluster", "finish P10", "P50", "P90", "P(late)", "legs left");
        foreach (var r in result.Runs.OrderByDescending(r => r.Finish.P90 ?? DateTimeOffset.MaxValue).Take(shown))
        {
            table.Add(r.Id, r.Cluster, Date(r.Finish.P10), Date(r.Finish.P50), Date(r.Finish.P90), Format.Fixed(r.ProbabilityLate, 2), Format.Fixed(r.MeanLegs, 1));
        }

        table.WriteTo(o);
        if (!context.Detail)
        {
            o.WriteLine("Replicas, failure rate and mean charges: --detail.");
        }

        o.WriteLine("A simulation from stated assumptions (docs/forecast.md): queues at a real site can differ, and the site's charging rules decide.");
    }
}
