using System.CommandLine;
using System.Globalization;
using Campaign.App.Plans;
using Campaign.Cli.Output;
using Campaign.Core.Lifecycle;

namespace Campaign.Cli.Commands;

/// <summary>campaign plan show | export | diff: the saved plan, as a table, a file, or against another version.</summary>
internal static class PlanCommand
{
    public static Command Build(CampaignApp app)
    {
        var command = new Command("plan", "The saved plan: show it, export it, compare two versions");

        var version = new Option<long?>("--version") { Description = "Plan version (default: the current one)", HelpName = "N" };
        var show = new Command("show", "Show a saved plan: its configurations, resolutions, clusters, estimates and, for the current one, where each run stands") { version };
        app.Bind(show, context =>
        {
            var view = new PlanViews(context.Time).Show(context.Workspace, context.Parse.GetValue(version));
            if (context.Json)
            {
                Json.Write(context.Out, Document(view));
                return ExitCodes.Ok;
            }

            WriteShow(context, view);
            return ExitCodes.Ok;
        });
        command.Add(show);

        var exportVersion = new Option<long?>("--version") { Description = "Plan version (default: the current one)", HelpName = "N" };
        var format = new Option<string>("--format") { Description = "csv (default), md (Markdown) or json", DefaultValueFactory = _ => "csv" };
        Choices.Restrict(format, "csv", "md", "json");
        var output = new Option<string?>("--out") { Description = "File to write (default: standard output)", HelpName = "FILE" };
        var export = new Command("export", "Write a saved plan as CSV, Markdown or JSON, one row per configuration and resolution") { exportVersion, format, output };
        app.Bind(export, context =>
        {
            var view = new PlanViews(context.Time).Show(context.Workspace, context.Parse.GetValue(exportVersion));
            var text = new StringWriter();
            switch (context.Parse.GetValue(format))
            {
                case "md":
                    WriteMarkdown(text, view);
                    break;
                case "json":
                    Json.Write(text, Document(view));
                    break;
                default:
                    WriteCsv(text, view);
                    break;
            }

            if (context.Parse.GetValue(output) is { } file)
            {
                var path = app.Resolve(file);
                File.WriteAllText(path, text.ToString());
                if (context.Json)
                {
                    Json.Write(context.Out, new { PlanId = view.Plan.Id, File = path, Rows = view.Rows.Count });
                }
                else
                {
                    context.Out.WriteLine($"Plan {view.Plan.Id}: {Format.Count(view.Rows.Count, "row")} written to {path}.");
                }
            }
            else
            {
                WrappingWriter.Unwrapped(context.Out).Write(text.ToString());
            }

            return ExitCodes.Ok;
        });
        command.Add(export);

        var older = new Argument<long?>("OLDER") { Description = "The older version (default: the one before NEWER)", Arity = ArgumentArity.ZeroOrOne };
        var newer = new Argument<long?>("NEWER") { Description = "The newer version (default: the current one)", Arity = ArgumentArity.ZeroOrOne };
        var diff = new Command("diff", "Compare two plan versions: configurations added, dropped, carried over (started) and kept, and the cost change") { older, newer };
        app.Bind(diff, context =>
        {
            var comparison = new PlanViews(context.Time).Compare(context.Workspace, context.Parse.GetValue(older), context.Parse.GetValue(newer));
            WriteDiff(context, comparison);
            return ExitCodes.Ok;
        });
        command.Add(diff);
        return command;
    }

    /// <summary>Writes the comparison of two plan versions.</summary>
    public static void WriteDiff(CommandContext context, PlanComparison c)
    {
        if (context.Json)
        {
            Json.Write(context.Out, new
            {
                Older = c.Older.Id,
                Newer = c.Newer.Id,
                Added = c.Of(PlanChange.Added),
                Dropped = c.Of(PlanChange.Dropped),
                CarriedOver = c.Of(PlanChange.CarriedOver),
                Kept = c.Of(PlanChange.Kept),
                ByCluster = c.ByCluster,
                c.OldCost,
                c.NewCost,
            });
            return;
        }

        var o = context.Out;
        var counts = Enum.GetValues<PlanChange>().Select(k => $"{Format.Integer(c.Of(k).Count)} {Words(k)}");
        o.WriteLine($"Plan {c.Older.Id} ({Day(c.Older.CreatedAt)}) -> plan {c.Newer.Id} ({Day(c.Newer.CreatedAt)}): {string.Join(", ", counts)}.");
        var changed = c.Differences.Where(d => d.Change != PlanChange.Kept || context.Detail).ToList();
        if (changed.Count > 0)
        {
            o.WriteLine();
            var notes = changed.Any(d => d.Why.Length > 0);
            var headers = new List<string> { "configuration", "change", "cluster", $"cost in {c.Older.Id}", $"cost in {c.Newer.Id}" };
            if (notes)
            {
                headers.Add("what had happened");
            }

            var table = notes ? new TextTable(headers.ToArray()).Wrap("what had happened") : new TextTable(headers.ToArray());
            foreach (var d in changed)
            {
                var cells = new List<string> { d.ConfigId, Words(d.Change), d.Cluster, d.Change == PlanChange.Added ? "-" : Format.Fixed(d.OldCost, 0), d.Change == PlanChange.Dropped ? "-" : Format.Fixed(d.NewCost, 0) };
                if (notes)
                {
                    cells.Add(d.Why);
                }

                table.Add(cells.ToArray());
            }

            table.WriteTo(o);
        }

        o.WriteLine();
        var clusters = new TextTable("cluster", $"plan {c.Older.Id}", $"plan {c.Newer.Id}", "change");
        foreach (var k in c.ByCluster.Append(new ClusterCostChange("ALL", c.OldCost, c.NewCost)))
        {
            clusters.Add(k.Cluster, Format.Fixed(k.OldCost, 0), Format.Fixed(k.NewCost, 0), Signed(k.NewCost - k.OldCost));
        }

        clusters.WriteTo(o);
        var quantiles = c.Older.Quantile == c.Newer.Quantile
            ? $"the {Format.Fixed(c.Newer.Quantile * 100, 0)}th percentile"
            : $"each plan's own quantile ({Format.Fixed(c.Older.Quantile * 100, 0)}th and {Format.Fixed(c.Newer.Quantile * 100, 0)}th percentile)";
        o.WriteLine($"Costs are charged core-hours at {quantiles}"
            + (context.Detail ? "." : "; configurations kept as they were: --detail."));
        o.WriteLine("Estimates, not charges: the site's charging rules decide.");
    }

    private static void WriteShow(CommandContext context, PlanView view)
    {
        var o = context.Out;
        var p = view.Plan;
        o.WriteLine($"Plan {p.Id} (of {string.Join(", ", view.Versions.Select(v => v.Id))}), saved {Day(p.CreatedAt)} from {p.Source}: {p.Objective} {Format.Fixed(p.Value, 4)} (at most {Format.Fixed(p.UpperBound, 4)}); costs at the {Format.Fixed(p.Quantile * 100, 0)}th percentile.");
        o.WriteLine($"{Format.Count(p.ConfigIds.Count, "configuration")}, {Format.Count(p.Runs.Count(), "run")}{(p.Carried.Count > 0 ? $"; {Format.Integer(p.Carried.Count)} carried over because they had started" : "")}.");
        o.WriteLine();
        var headers = new List<string> { "configuration", "res", "kind", "cluster", "cores", "core-h", "cost" };
        if (context.Detail)
        {
            headers.AddRange(new[] { "high", "wall h", "legs", "target M" });
        }

        if (view.IsCurrent)
        {
            headers.Add("standing");
        }

        var table = new TextTable(headers.ToArray());
        foreach (var r in view.Rows)
        {
            var e = r.Entry;
            var cells = new List<string> { e.ConfigId, e.Kind == PlanEntryKind.Trials ? "-" : Format.Integer(e.Level), e.Kind == PlanEntryKind.Trials ? "ecc trials" : "run", e.Cluster, Format.Integer(e.Cores), Format.Fixed(e.Estimate.Median, 0), Format.Fixed(e.Cost, 0) };
            if (context.Detail)
            {
                cells.AddRange(new[] { Format.Fixed(e.Estimate.High, 0), Format.Fixed(e.Estimate.WallHours, 1), Format.Integer(e.Estimate.Legs), e.TargetLength is { } t ? Format.Fixed(t, 0) : "-" });
            }

            if (view.IsCurrent)
            {
                cells.Add(r.Status);
            }

            table.Add(cells.ToArray());
        }

        table.WriteTo(o);
        o.WriteLine();
        var clusters = new TextTable("cluster", "configurations", "runs", "median core-h", "cost");
        foreach (var g in p.Entries.GroupBy(e => e.Cluster).OrderBy(g => g.Key, StringComparer.Ordinal))
        {
            clusters.Add(g.Key, Format.Integer(g.Select(e => e.ConfigId).Distinct().Count()), Format.Integer(g.Count(e => e.Kind == PlanEntryKind.Run)), Format.Fixed(g.Sum(e => e.Estimate.Median), 0), Format.Fixed(g.Sum(e => e.Cost), 0));
        }

        clusters.WriteTo(o);
        o.WriteLine("core-h: the median core-hours consumed; cost: charged core-hours at the plan's quantile. Estimates, not charges: the site's charging rules decide.");
    }

    private static object Document(PlanView view) => new
    {
        PlanId = view.Plan.Id,
        CreatedAt = view.Plan.CreatedAt.ToString("O", CultureInfo.InvariantCulture),
        view.Plan.Objective,
        view.Plan.Quantile,
        view.Plan.Value,
        view.Plan.UpperBound,
        view.Plan.Source,
        Versions = view.Versions.Select(v => v.Id),
        Rows = view.Rows.Select(r => new
        {
            r.Entry.ConfigId,
            Level = r.Entry.Kind == PlanEntryKind.Trials ? (int?)null : r.Entry.Level,
            Kind = r.Entry.Kind == PlanEntryKind.Trials ? "ecc_trials" : "run",
            r.Entry.Cluster,
            r.Entry.Cores,
            CoreHoursMedian = r.Entry.Estimate.Median,
            CoreHoursHigh = r.Entry.Estimate.High,
            r.Entry.Cost,
            r.Entry.Estimate.WallHours,
            r.Entry.Estimate.Legs,
            r.Entry.TargetLength,
            Standing = r.Status.Length == 0 ? null : r.Status,
        }),
        view.Plan.Carried,
        view.Plan.Reserved,
    };

    private static readonly string[] ExportHeader = { "configuration", "res", "kind", "cluster", "cores", "core_hours_median", "core_hours_high", "cost", "wall_hours", "legs", "target_m", "standing" };

    private static IEnumerable<string[]> ExportRows(PlanView view)
    {
        using var raw = Format.PlainNumbers(true);
        foreach (var r in view.Rows)
        {
            var e = r.Entry;
            yield return new[]
            {
                e.ConfigId, e.Kind == PlanEntryKind.Trials ? "" : Format.Integer(e.Level), e.Kind == PlanEntryKind.Trials ? "ecc_trials" : "run", e.Cluster, Format.Integer(e.Cores),
                Format.Fixed(e.Estimate.Median, 0), Format.Fixed(e.Estimate.High, 0), Format.Fixed(e.Cost, 0), Format.Fixed(e.Estimate.WallHours, 1),
                Format.Integer(e.Estimate.Legs), e.TargetLength is { } t ? Format.Fixed(t, 0) : "", r.Status,
            };
        }
    }

    private static void WriteCsv(TextWriter o, PlanView view)
    {
        o.WriteLine(string.Join(",", ExportHeader));
        foreach (var row in ExportRows(view).ToList())
        {
            o.WriteLine(string.Join(",", row.Select(c => c.Contains(',', StringComparison.Ordinal) ? "\"" + c + "\"" : c)));
        }
    }

    private static void WriteMarkdown(TextWriter o, PlanView view)
    {
        o.WriteLine($"Plan {view.Plan.Id}, saved {Day(view.Plan.CreatedAt)}; cost = charged core-hours at the {Format.Fixed(view.Plan.Quantile * 100, 0)}th percentile.");
        o.WriteLine();
        o.WriteLine("| " + string.Join(" | ", ExportHeader) + " |");
        o.WriteLine("|" + string.Concat(ExportHeader.Select(_ => "---|")));
        foreach (var row in ExportRows(view).ToList())
        {
            o.WriteLine("| " + string.Join(" | ", row) + " |");
        }
    }

    private static string Words(PlanChange change) => change switch
    {
        PlanChange.CarriedOver => "carried over",
        _ => change.ToString().ToLowerInvariant(),
    };

    private static string Signed(double value) => value > 0.5 ? "+" + Format.Fixed(value, 0) : Format.Fixed(value, 0);

    private static string Day(DateTimeOffset at) => at.UtcDateTime.ToString("yyyy-MM-dd HH:mm", CultureInfo.InvariantCulture) + " UTC";
}
