using System.CommandLine;
using System.Globalization;
using Campaign.App.Estimates;
using Campaign.Cli.Output;
using Campaign.Core.CostModel;

namespace Campaign.Cli.Commands;

/// <summary>campaign estimate FILE: proposal-ready core-hour estimates for candidate configurations.</summary>
internal static class EstimateCommand
{
    /// <summary>The caution printed with every estimate.</summary>
    public const string Caution =
        "These are statistical estimates from the group's own run history, not guarantees; the allocating site's charging rules and policies decide what is charged.";

    public static Command Build(CampaignApp app)
    {
        var file = new Argument<string>("FILE") { Description = "Candidate file (CSV; columns in docs/formats.md)" };
        var interval = new Option<double>("--interval") { Description = "Central probability of the intervals (default 0.9)", DefaultValueFactory = _ => 0.9 };
        var format = new Option<string>("--format") { Description = "table (default), md or tex (a proposal's resource table: per-configuration subtotals, totals per cluster against the allocation), or csv", DefaultValueFactory = _ => "table" };
        Choices.Restrict(format, "table", "md", "tex", "csv");
        var margin = new Option<double>("--checkpoint-margin") { Description = "Hours of each job kept for writing the checkpoint (default 0.5)", DefaultValueFactory = _ => 0.5 };
        var trials = new Option<int>("--ecc-trials") { Description = "Eccentricity-reduction trial runs per configuration (default 0)" };
        var trialLength = new Option<double>("--ecc-length") { Description = "Simulated length of each trial run in M (default 1500)", DefaultValueFactory = _ => 1500 };
        var samples = new Option<int>("--samples") { Description = "Monte Carlo draws for the totals (default 4000)", DefaultValueFactory = _ => 4000 };
        var seed = new Option<int>("--seed") { Description = "Seed of the Monte Carlo draws (default 1)", DefaultValueFactory = _ => 1 };
        var command = new Command("estimate", "Core-hours, wall time, job legs, charges and storage for candidate configurations, with totals")
        {
            file, interval, format, margin, trials, trialLength, samples, seed,
        };
        app.Bind(command, context =>
        {
            var shown = context.Parse.GetValue(file)!;
            var options = new EstimateOptions
            {
                Interval = context.Parse.GetValue(interval),
                CheckpointMarginHours = context.Parse.GetValue(margin),
                EccentricityTrials = context.Parse.GetValue(trials),
                EccentricityTrialLength = context.Parse.GetValue(trialLength),
                Samples = context.Parse.GetValue(samples),
                Seed = context.Parse.GetValue(seed),
            };
            var result = new EstimateService(context.Time).Estimate(new EstimateRequest(context.Workspace, app.Resolve(shown), shown, options));
            Write(context, result, shown, context.Parse.GetValue(format)!);
            return ExitCodes.Ok;
        });
        return command;
    }

    /// <summary>Writes an estimate in <paramref name="format"/> (table, md, tex or csv; JSON with --json).</summary>
    public static void Write(CommandContext context, EstimateResult result, string shown, string format)
    {
        var (estimate, modelId, storage, allocations) = (result.Estimate, result.ModelId, result.Storage, result.Allocations);
        foreach (var note in result.Notes)
        {
            context.Err.WriteLine("campaign: note: " + note);
        }

        if (context.Json)
        {
            Json.Write(context.Out, new
            {
                File = shown,
                ModelId = modelId,
                estimate.Interval,
                estimate.Samples,
                estimate.Seed,
                StorageFromLogs = new { Checkpoint = storage.CheckpointFitted, Output = storage.OutputFitted },
                estimate.Runs,
                estimate.Total,
                estimate.ByCluster,
                Allocations = allocations,
                result.Notes,
                Caution,
            });
            return;
        }

        switch (format)
        {
            case "csv":
                WriteCsv(WrappingWriter.Unwrapped(context.Out), estimate);
                break;
            case "md":
                ProposalDocument.WriteMarkdown(WrappingWriter.Unwrapped(context.Out), result);
                break;
            case "tex":
                ProposalDocument.WriteLatex(WrappingWriter.Unwrapped(context.Out), result);
                break;
            default:
                if (context.Detail)
                {
                    WriteTable(context.Out, estimate, allocations, modelId, storage);
                }
                else
                {
                    WriteShort(context.Out, estimate, allocations, modelId);
                }

                break;
        }
    }

    private static readonly string[] Header =
    {
        "id", "res", "kind", "cluster", "cores", "T/M", "median core-h", "low", "high", "wall h", "legs", "node-h", "charged core-h", "checkpoint GB", "output GB", "flags",
    };

    private static string[] Cells(EstimateRow r) => new[]
    {
        r.Id, Format.Integer(r.Level), r.Kind, r.Cluster, Format.Integer(r.Cores), Format.Fixed(r.LengthM, 0), Format.Fixed(r.Median, 0), Format.Fixed(r.Low, 0),
        Format.Fixed(r.High, 0), Format.Fixed(r.WallHours, 1), Format.Integer(r.Legs), Format.Fixed(r.NodeHours, 0), Format.Fixed(r.ChargedCoreHours, 0),
        Format.Fixed(r.CheckpointGb, 1), Format.Fixed(r.OutputGb, 1), Flags(r),
    };

    private static string Flags(EstimateRow r) => (r.Source == "given" ? "given " : "") + (r.Extrapolation.Count > 0 ? "EXTRAPOLATION" : "");

    private static void WriteTable(TextWriter o, ProposalEstimate e, IReadOnlyDictionary<string, double> allocations, long? modelId, StorageModel storage)
    {
        var table = new TextTable(Header);
        foreach (var r in e.Runs)
        {
            table.Add(Cells(r));
        }

        table.WriteTo(o);
        WriteNotes(o, e, modelId, storage);
        o.WriteLine();
        var totals = new TextTable("total", "median core-h", $"{Pct(e.Interval)} interval", "mean", "charged median", "charged interval", "allocation core-h", "median / allocation");
        foreach (var (name, t) in e.ByCluster.Append(new KeyValuePair<string, EstimateTotal>("ALL", e.Total)))
        {
            var allocation = name == "ALL" ? allocations.Values.Sum() : allocations.GetValueOrDefault(name);
            totals.Add(name, Format.Fixed(t.Median, 0), $"{Format.Fixed(t.Low, 0)} .. {Format.Fixed(t.High, 0)}", Format.Fixed(t.Mean, 0), Format.Fixed(t.ChargedMedian, 0),
                $"{Format.Fixed(t.ChargedLow, 0)} .. {Format.Fixed(t.ChargedHigh, 0)}", allocation > 0 ? Format.Fixed(allocation, 0) : "-", allocation > 0 ? Format.Fixed(t.ChargedMedian / allocation, 3) : "-");
        }

        totals.WriteTo(o);
        o.WriteLine($"Totals: Monte Carlo over the model's coefficients (shared by all runs) and each run's residual, {e.Samples} draws, seed {e.Seed}.");
        o.WriteLine(Caution);
    }

    /// <summary>What a coordinator acts on: cost per run and level with its interval, the totals against the allocations, what to be wary of.</summary>
    private static void WriteShort(TextWriter o, ProposalEstimate e, IReadOnlyDictionary<string, double> allocations, long? modelId)
    {
        var interval = $"{Pct(e.Interval)} interval";
        var table = new TextTable("id", "res", "cluster", "cores", "core-h", interval, "wall h", "legs", "flags").Wrap("flags");
        foreach (var r in e.Runs)
        {
            var flags = new[] { r.Kind == "ecc" ? "ecc trials" : "", r.Source == "given" ? "given" : "", r.Extrapolation.Count > 0 ? "beyond logs" : "" };
            table.Add(r.Id, Format.Integer(r.Level), r.Cluster, Format.Integer(r.Cores), Format.Fixed(r.Median, 0), $"{Format.Fixed(r.Low, 0)} .. {Format.Fixed(r.High, 0)}",
                Format.Fixed(r.WallHours, 1), Format.Integer(r.Legs), string.Join(", ", flags.Where(f => f.Length > 0)));
        }

        table.WriteTo(o);
        var flagged = e.Runs.Where(r => r.Extrapolation.Count > 0).ToList();
        if (flagged.Count > 0)
        {
            o.WriteLine($"Beyond the logged runs ({Format.Count(flagged.Count, "row")}; treat with care): "
                + Format.List(flagged.Select(r => $"{r.Id} res {r.Level}{(r.Kind == "ecc" ? " trials" : "")}: {string.Join("; ", r.Extrapolation)}"), 3, "; ") + ".");
        }

        o.WriteLine();
        var totals = new TextTable("total", "charged median", $"charged {interval}", "allocation core-h", "median / allocation");
        foreach (var (name, t) in e.ByCluster.Append(new KeyValuePair<string, EstimateTotal>("ALL", e.Total)))
        {
            var allocation = name == "ALL" ? allocations.Values.Sum() : allocations.GetValueOrDefault(name);
            totals.Add(name, Format.Fixed(t.ChargedMedian, 0), $"{Format.Fixed(t.ChargedLow, 0)} .. {Format.Fixed(t.ChargedHigh, 0)}",
                allocation > 0 ? Format.Fixed(allocation, 0) : "-", allocation > 0 ? Format.Fixed(t.ChargedMedian / allocation * 100, 0) + "%" : "-");
        }

        totals.WriteTo(o);
        o.WriteLine($"Core-hours consumed per run and resolution at their median; cost model {(modelId is null ? "(none: given costs only)" : modelId.Value.ToString(CultureInfo.InvariantCulture))}. Node-hours, charges per row, storage and the method: --detail; for a proposal: --format md.");
        o.WriteLine(Caution);
    }

    private static void WriteNotes(TextWriter o, ProposalEstimate e, long? modelId, StorageModel storage)
    {
        o.WriteLine($"Core-hours consumed (wall x cores) at {Pct(e.Interval)} central prediction intervals; cost model {(modelId is null ? "(none: given costs only)" : modelId.Value.ToString(CultureInfo.InvariantCulture))}.");
        o.WriteLine($"Storage: checkpoint {(storage.CheckpointFitted ? "fitted from logged sizes" : "rule of thumb (no sizes logged)")}, output {(storage.OutputFitted ? "fitted from logged sizes" : "rule of thumb (no sizes logged)")}.");
        var flagged = e.Runs.Where(r => r.Extrapolation.Count > 0).ToList();
        if (flagged.Count > 0)
        {
            o.WriteLine($"EXTRAPOLATION: {Format.Count(flagged.Count, "row")} lie outside the logged runs; treat them with extra care:");
            foreach (var r in flagged)
            {
                o.WriteLine($"  {r.Id} res {r.Level}{(r.Kind == "ecc" ? " (eccentricity trials)" : "")}: {string.Join("; ", r.Extrapolation)}");
            }
        }
    }

    private static void WriteCsv(TextWriter o, ProposalEstimate e)
    {
        using var raw = Format.PlainNumbers(true); // a CSV carries raw numbers
        o.WriteLine(string.Join(",", Header.Select(Quote)));
        foreach (var r in e.Runs)
        {
            o.WriteLine(string.Join(",", Cells(r).Select(Quote)));
        }
    }

    private static string Quote(string cell) => cell.IndexOfAny(new[] { ',', '"', '\n' }) >= 0 ? "\"" + cell.Replace("\"", "\"\"", StringComparison.Ordinal) + "\"" : cell;

    private static string Pct(double p) => Format.Fixed(p * 100, 0) + "%";
}
