using System.Text;
using Campaign.App.Estimates;
using Campaign.Cli.Output;
using Campaign.Core.CostModel;

namespace Campaign.Cli.Commands;

/// <summary>
/// The estimate as a proposal's resource table, in Markdown or LaTeX: one row per configuration and resolution
/// (and its eccentricity trials), a subtotal per configuration over all its rows, then the totals per cluster
/// against the allocation. Numbers carry thousands separators.
/// </summary>
internal static class ProposalDocument
{
    private static readonly string[] Columns =
    {
        "configuration", "resolution", "cluster", "cores", "length (M)", "wall h", "jobs", "core-h (median)", "interval", "charged core-h", "storage GB",
    };

    private static readonly string[] TotalColumns = { "cluster", "charged core-h (median)", "interval", "allocation core-h", "share of allocation" };

    /// <summary>Rows of the main table; the flag marks a configuration's subtotal.</summary>
    private static IEnumerable<(string[] Cells, bool Subtotal)> Rows(ProposalEstimate e)
    {
        foreach (var group in e.Runs.GroupBy(r => r.Id))
        {
            var rows = group.OrderBy(r => r.Kind == "ecc" ? 1 : 0).ThenBy(r => r.Level).ToList();
            foreach (var r in rows)
            {
                yield return (new[]
                {
                    r.Id, r.Kind == "ecc" ? "ecc trials" : Format.Integer(r.Level), r.Cluster, Format.Integer(r.Cores), Format.Fixed(r.LengthM, 0), Format.Fixed(r.WallHours, 1),
                    Format.Integer(r.Legs), Format.Fixed(r.Median, 0), $"{Format.Fixed(r.Low, 0)} - {Format.Fixed(r.High, 0)}", Format.Fixed(r.ChargedCoreHours, 0),
                    Format.Fixed(r.CheckpointGb + r.OutputGb, 1),
                }, false);
            }

            if (rows.Count > 1)
            {
                yield return (new[]
                {
                    group.Key + " total", "all", "", "", "", Format.Fixed(rows.Sum(r => r.WallHours), 1), Format.Integer(rows.Sum(r => r.Legs)), Format.Fixed(rows.Sum(r => r.Median), 0), "",
                    Format.Fixed(rows.Sum(r => r.ChargedCoreHours), 0), Format.Fixed(rows.Sum(r => r.CheckpointGb + r.OutputGb), 1),
                }, true);
            }
        }
    }

    private static IEnumerable<string[]> Totals(ProposalEstimate e, IReadOnlyDictionary<string, double> allocations)
    {
        foreach (var (name, t) in e.ByCluster.Append(new KeyValuePair<string, EstimateTotal>("all clusters", e.Total)))
        {
            var allocation = name == "all clusters" ? allocations.Values.Sum() : allocations.GetValueOrDefault(name);
            yield return new[]
            {
                name, Format.Fixed(t.ChargedMedian, 0), $"{Format.Fixed(t.ChargedLow, 0)} - {Format.Fixed(t.ChargedHigh, 0)}",
                allocation > 0 ? Format.Fixed(allocation, 0) : "-", allocation > 0 ? Format.Fixed(t.ChargedMedian / allocation * 100, 0) + "%" : "-",
            };
        }
    }

    private static string Notes(EstimateResult result) =>
        $"Intervals are {Format.Fixed(result.Estimate.Interval * 100, 0)}% central prediction intervals of the cost model{(result.ModelId is { } id ? " (version " + Format.Integer(id) + ")" : "")} fitted to the group's own runs. "
        + "A configuration's total is the sum of its rows' medians; the cluster totals are Monte Carlo sums over the model's uncertainty. "
        + EstimateCommand.Caution;

    public static void WriteMarkdown(TextWriter o, EstimateResult result)
    {
        var e = result.Estimate;
        o.WriteLine("| " + string.Join(" | ", Columns) + " |");
        o.WriteLine("|" + string.Concat(Columns.Select((_, i) => i is 0 or 1 or 2 ? "---|" : "---:|")));
        foreach (var (cells, subtotal) in Rows(e))
        {
            o.WriteLine("| " + string.Join(" | ", subtotal ? cells.Select(c => c.Length == 0 ? "" : $"**{c}**") : cells) + " |");
        }

        o.WriteLine();
        o.WriteLine("| " + string.Join(" | ", TotalColumns) + " |");
        o.WriteLine("|---|" + string.Concat(TotalColumns.Skip(1).Select(_ => "---:|")));
        foreach (var cells in Totals(e, result.Allocations))
        {
            o.WriteLine("| " + string.Join(" | ", cells) + " |");
        }

        o.WriteLine();
        o.WriteLine(Notes(result));
        var flagged = e.Runs.Where(r => r.Extrapolation.Count > 0).ToList();
        if (flagged.Count > 0)
        {
            o.WriteLine();
            o.WriteLine($"Beyond the logged runs ({Format.Count(flagged.Count, "row")}): " + string.Join("; ", flagged.Select(r => $"{r.Id} res {r.Level}{(r.Kind == "ecc" ? " trials" : "")}: {string.Join(", ", r.Extrapolation)}")) + ".");
        }
    }

    public static void WriteLatex(TextWriter o, EstimateResult result)
    {
        var e = result.Estimate;
        o.WriteLine("% Resource request table written by campaign estimate --format tex; needs \\usepackage{booktabs}.");
        o.WriteLine("\\begin{tabular}{lllrrrrrrrr}");
        o.WriteLine("\\toprule");
        o.WriteLine(string.Join(" & ", Columns.Select(Tex)) + " \\\\");
        o.WriteLine("\\midrule");
        foreach (var (cells, subtotal) in Rows(e))
        {
            o.WriteLine(string.Join(" & ", cells.Select(c => subtotal && c.Length > 0 ? $"\\textbf{{{Tex(c)}}}" : Tex(c))) + " \\\\" + (subtotal ? " \\addlinespace" : ""));
        }

        o.WriteLine("\\bottomrule");
        o.WriteLine("\\end{tabular}");
        o.WriteLine();
        o.WriteLine("\\begin{tabular}{lrrrr}");
        o.WriteLine("\\toprule");
        o.WriteLine(string.Join(" & ", TotalColumns.Select(Tex)) + " \\\\");
        o.WriteLine("\\midrule");
        foreach (var cells in Totals(e, result.Allocations))
        {
            o.WriteLine(string.Join(" & ", cells.Select(Tex)) + " \\\\");
        }

        o.WriteLine("\\bottomrule");
        o.WriteLine("\\end{tabular}");
        o.WriteLine();
        o.WriteLine("% " + Notes(result));
    }

    /// <summary>Text made safe for LaTeX: its special characters escaped, a range dash as an en dash.</summary>
    public static string Tex(string text)
    {
        var b = new StringBuilder();
        foreach (var c in text)
        {
            b.Append(c switch
            {
                '\\' => "\\textbackslash{}",
                '&' or '%' or '$' or '#' or '_' or '{' or '}' => "\\" + c,
                '~' => "\\textasciitilde{}",
                '^' => "\\textasciicircum{}",
                _ => c.ToString(),
            });
        }

        return b.ToString().Replace(" - ", "--", StringComparison.Ordinal);
    }
}
