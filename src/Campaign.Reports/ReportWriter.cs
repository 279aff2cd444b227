using System.Globalization;
using System.Net;
using System.Text;
using ScottPlot;

namespace Campaign.Reports;

/// <summary>
/// Writes the campaign report: four plots as PNG and SVG (allocation burn-down, run progress, coverage map,
/// cost-model check) and report.html, self-contained (the plots inline as PNG data). Colours are Campaign's own
/// and survive printing in grey; text uses the DejaVu Sans font shipped with the project.
/// </summary>
public static class ReportWriter
{
    private const string FontName = "Campaign Sans";
    private const int Width = 900;
    private const int Height = 480;

    private static readonly Color Ink = Color.FromHex("#23313F");
    private static readonly Color Teal = Color.FromHex("#1B7F79");
    private static readonly Color Amber = Color.FromHex("#D98C1F");
    private static readonly Color Plum = Color.FromHex("#7A3E6B");
    private static readonly Color Stone = Color.FromHex("#9AA5AE");
    private static readonly object FontLock = new();
    private static bool _fontLoaded;

    /// <summary>Writes the report into <paramref name="folder"/>; returns the files written.</summary>
    public static IReadOnlyList<string> Write(ReportData data, string folder)
    {
        Directory.CreateDirectory(folder);
        LoadFont();
        var figures = new List<(string Name, string Title, string Caption)>
        {
            ("burn-down", "Allocation burn-down", "Core-hours left in each allocation: the plan spread evenly over the period (dashed), what has been charged up to today (solid), the ends of the use-it-or-lose-it windows (dotted), and the forecast's range of what will be left at each window's end, from where the campaign stands (band, P10 to P90)."),
            ("progress", "Progress of each run", "Simulated time reached (in M) against wall-clock time; each line is one run, ending at its target length when finished. The runs with the most core-hours still to come are named; the others are grey."),
            ("coverage", "Coverage of the parameter space", "Mass ratio against effective spin: candidates, the configurations chosen for the plan, the runs the campaign finished (rehearsals are not counted), and those the group already had; precessing configurations have triangles and diamonds."),
            ("coverage-spins", "Coverage of the spins", "The same configurations by effective spin and in-plane spin (the larger of the two holes'): aligned-spin configurations lie on the axis, precessing ones above it."),
            ("cost-model", "Cost model check", "Predicted against actual core-hours of the logged runs, with each prediction's 90% interval; points near the diagonal are well predicted."),
        };
        var files = new List<string>();
        var images = new Dictionary<string, string>();
        foreach (var (name, title, _) in figures)
        {
            var plot = name switch
            {
                "burn-down" => BurnDown(data),
                "progress" => Progress(data),
                "coverage" => CoverageMap(data, p => p.Q, "mass ratio q", p => p.ChiEff, "effective spin chi_eff"),
                "coverage-spins" => CoverageMap(data, p => p.ChiEff, "effective spin chi_eff", p => p.ChiPerp, "in-plane spin chi_perp (larger hole)"),
                _ => ModelCheck(data),
            };
            Style(plot, title);
            var png = Path.Combine(folder, name + ".png");
            var svg = Path.Combine(folder, name + ".svg");
            plot.SavePng(png, Width, Height);
            plot.SaveSvg(svg, Width, Height);
            files.Add(png);
            files.Add(svg);
            images[name] = Convert.ToBase64String(File.ReadAllBytes(png));
        }

        var html = Path.Combine(folder, "report.html");
        File.WriteAllText(html, Html(data, figures, images));
        files.Add(html);
        return files;
    }

    private static void LoadFont()
    {
        lock (FontLock)
        {
            if (_fontLoaded)
            {
                return;
            }

            var path = Path.Combine(Path.GetTempPath(), "campaign-dejavu-sans-" + Environment.ProcessId.ToString(CultureInfo.InvariantCulture) + ".ttf");
            using (var stream = typeof(ReportWriter).Assembly.GetManifestResourceStream("fonts/DejaVuSans.ttf")!)
            using (var file = File.Create(path))
            {
                stream.CopyTo(file);
            }

            Fonts.AddFontFile(FontName, path);
            _fontLoaded = true;
        }
    }

    private static void Style(Plot plot, string title)
    {
        plot.Font.Set(FontName);
        plot.Title(title);
        plot.Axes.Title.Label.ForeColor = Ink;
        plot.FigureBackground.Color = Colors.White;
        plot.DataBackground.Color = Color.FromHex("#FBFAF7");
        plot.Grid.MajorLineColor = Color.FromHex("#E4E1DA");
        plot.Legend.FontName = FontName;
        plot.Legend.Alignment = Alignment.UpperRight;
    }

    private static double OaDate(DateTimeOffset at) => at.UtcDateTime.ToOADate();

    /// <summary>
    /// Dates on the bottom axis as ISO dates (2027-04-01), as everywhere else in the tool; with the time of day
    /// (2027-04-01 13:30) when the plot spans less than <paramref name="days"/> is two days.
    /// </summary>
    private static void IsoDates(Plot plot, double days = double.PositiveInfinity)
    {
        var axis = plot.Axes.DateTimeTicksBottom();
        var format = days < 2 ? "yyyy-MM-dd HH:mm" : "yyyy-MM-dd";
        if (axis.TickGenerator is ScottPlot.TickGenerators.DateTimeAutomatic ticks)
        {
            ticks.LabelFormatter = d => d.ToString(format, System.Globalization.CultureInfo.InvariantCulture);
        }
        plot.XLabel("date (UTC)");
    }

    private static Plot BurnDown(ReportData data)
    {
        var plot = new Plot();
        var palette = new[] { Teal, Plum, Amber, Ink };
        var k = 0;
        var windowsShown = false;
        foreach (var allocation in data.Allocations)
        {
            var color = palette[k++ % palette.Length];
            var planned = plot.Add.Scatter(new[] { OaDate(allocation.Start), OaDate(allocation.End) }, new[] { allocation.CoreHours, allocation.CoreHours - allocation.PlannedCoreHours });
            planned.Color = color;
            planned.LinePattern = LinePattern.Dashed;
            planned.MarkerSize = 0;
            planned.LegendText = allocation.Cluster + ": plan";

            // What has been charged, up to where the campaign stands (or the allocation's end): always drawn, so the
            // legend names it even before the first charge.
            var charges = data.Charges.Where(c => c.Cluster == allocation.Cluster && c.At >= allocation.Start && c.At <= allocation.End).OrderBy(c => c.At).ToList();
            var xs = new List<double> { OaDate(allocation.Start) };
            var ys = new List<double> { allocation.CoreHours };
            var left = allocation.CoreHours;
            foreach (var c in charges)
            {
                left -= c.CoreHours;
                xs.Add(OaDate(c.At));
                ys.Add(left);
            }

            var stands = data.GeneratedAt < allocation.Start ? allocation.Start : data.GeneratedAt > allocation.End ? allocation.End : data.GeneratedAt;
            xs.Add(OaDate(stands));
            ys.Add(left);
            var actual = plot.Add.Scatter(xs.ToArray(), ys.ToArray());
            actual.Color = color;
            actual.LineWidth = 2.5f;
            actual.MarkerSize = 0;
            actual.LegendText = allocation.Cluster + ": charged";

            foreach (var end in (allocation.WindowEnds ?? Array.Empty<DateTimeOffset>()).Where(e => e < allocation.End))
            {
                var line = plot.Add.VerticalLine(OaDate(end));
                line.Color = Stone;
                line.LinePattern = LinePattern.Dotted;
                line.LineWidth = 1;
                if (!windowsShown)
                {
                    line.LegendText = "end of an allocation window";
                    windowsShown = true;
                }
            }

            if (data.Forecast is { } forecast)
            {
                var windows = forecast.Windows.Where(w => w.Cluster == allocation.Cluster).OrderBy(w => w.End).ToList();
                if (windows.Count > 0)
                {
                    // The band starts where the campaign stands: the charge so far, today (or the allocation's start).
                    var bx = new List<double> { OaDate(stands) };
                    var low = new List<double> { left };
                    var high = new List<double> { left };
                    double sumP10 = 0, sumP90 = 0;
                    foreach (var w in windows)
                    {
                        sumP10 += w.P10;
                        sumP90 += w.P90;
                        bx.Add(OaDate(new DateTimeOffset(w.End.ToDateTime(TimeOnly.MaxValue), TimeSpan.Zero)));
                        high.Add(left - sumP10);
                        low.Add(left - sumP90);
                    }

                    var band = plot.Add.FillY(bx.ToArray(), low.ToArray(), high.ToArray());
                    band.FillColor = color.WithAlpha(0.18);
                    band.LineColor = color.WithAlpha(0.4);
                    band.LegendText = allocation.Cluster + ": forecast P10-P90";
                }
            }
        }

        IsoDates(plot);
        plot.YLabel("core-hours left");
        plot.ShowLegend();
        return plot;
    }

    /// <summary>How many runs the progress plot names; the rest are drawn in grey as "others".</summary>
    public const int NamedRuns = 6;

    private static Plot Progress(ReportData data)
    {
        var plot = new Plot();
        var palette = new[] { Teal, Plum, Amber, Ink, Color.FromHex("#3E6FB0"), Color.FromHex("#8A6D3B") };
        var lines = data.Progress.Where(p => p.Points.Count > 1).ToList();
        var named = lines.OrderByDescending(p => p.RemainingCost).ThenBy(p => p.RunId, StringComparer.Ordinal).Take(NamedRuns).Select(p => p.RunId).ToHashSet(StringComparer.Ordinal);
        var k = 0;
        var othersShown = false;
        foreach (var line in lines.OrderBy(p => named.Contains(p.RunId)))
        {
            var scatter = plot.Add.Scatter(line.Points.Select(p => OaDate(p.At)).ToArray(), line.Points.Select(p => p.T).ToArray());
            scatter.MarkerSize = 3;
            scatter.LineWidth = 1.2f;
            if (named.Contains(line.RunId))
            {
                scatter.Color = palette[k++ % palette.Length];
                scatter.LegendText = line.RunId;
            }
            else
            {
                scatter.Color = Stone.WithAlpha(0.7);
                if (!othersShown)
                {
                    scatter.LegendText = $"others ({lines.Count - named.Count} runs)";
                    othersShown = true;
                }
            }
        }

        if (lines.Count == 0)
        {
            plot.Add.Annotation("no run has started yet");
        }
        else
        {
            plot.ShowLegend();
            plot.Legend.Alignment = Alignment.UpperLeft;
        }

        var times = lines.SelectMany(l => l.Points).Select(p => p.At).ToList();
        IsoDates(plot, times.Count == 0 ? double.PositiveInfinity : (times.Max() - times.Min()).TotalDays);
        plot.YLabel("simulated time t (M)");
        return plot;
    }

    private static void Points(Plot plot, IReadOnlyList<CoveragePoint> points, Func<CoveragePoint, double> x, Func<CoveragePoint, double> y, Color color, float size, MarkerShape aligned, MarkerShape precessing, string label)
    {
        foreach (var (group, shape, suffix) in new[] { (false, aligned, " (aligned)"), (true, precessing, " (precessing)") })
        {
            var chosen = points.Where(p => p.Precessing == group).ToList();
            if (chosen.Count == 0)
            {
                continue;
            }

            var scatter = plot.Add.ScatterPoints(chosen.Select(x).ToArray(), chosen.Select(y).ToArray());
            scatter.Color = color;
            scatter.MarkerSize = size;
            scatter.MarkerShape = shape;
            scatter.LegendText = label + suffix;
        }
    }

    /// <summary>
    /// A panel of the coverage map: mass ratio against effective spin, or (the second panel) the spins, so that
    /// precessing configurations are told apart.
    /// </summary>
    private static Plot CoverageMap(ReportData data, Func<CoveragePoint, double> x, string xLabel, Func<CoveragePoint, double> y, string yLabel)
    {
        var plot = new Plot();
        AddCoverage(plot, data, x, y);
        plot.XLabel(xLabel);
        plot.YLabel(yLabel);
        plot.ShowLegend();
        return plot;
    }

    /// <summary>
    /// Candidates, the plan's choice, what the group already had and what the campaign finished (real runs only: a
    /// rehearsal is not science); precessing configurations have markers of their own.
    /// </summary>
    private static void AddCoverage(Plot plot, ReportData data, Func<CoveragePoint, double> x, Func<CoveragePoint, double> y)
    {
        Points(plot, data.Existing, x, y, Ink, 7, MarkerShape.Cross, MarkerShape.Eks, "already had");
        Points(plot, data.Candidates, x, y, Stone, 9, MarkerShape.OpenCircle, MarkerShape.OpenTriangleUp, "candidates");
        Points(plot, data.Chosen, x, y, Teal, 8, MarkerShape.FilledCircle, MarkerShape.FilledTriangleUp, "chosen");
        Points(plot, data.Finished, x, y, Amber, 11, MarkerShape.OpenSquare, MarkerShape.OpenDiamond, "finished");
    }

    private static Plot ModelCheck(ReportData data)
    {
        var plot = new Plot();
        if (data.ModelCheck.Count == 0)
        {
            plot.Add.Annotation("no cost model fitted yet");
            return plot;
        }

        var points = data.ModelCheck;
        foreach (var p in points)
        {
            var bar = plot.Add.Line(Math.Log10(p.Predicted), Math.Log10(p.Low), Math.Log10(p.Predicted), Math.Log10(p.High));
            bar.Color = Stone.WithAlpha(0.6);
            bar.LineWidth = 1;
        }

        foreach (var (group, color, label) in new[] { (false, Teal, "imported run logs"), (true, Amber, "runs finished by this campaign") })
        {
            var mine = points.Where(p => p.FromCampaign == group).ToList();
            if (mine.Count == 0)
            {
                continue;
            }

            var scatter = plot.Add.ScatterPoints(mine.Select(p => Math.Log10(p.Predicted)).ToArray(), mine.Select(p => Math.Log10(p.Actual)).ToArray());
            scatter.Color = color;
            scatter.MarkerSize = 5;
            scatter.LegendText = label;
        }
        var lo = points.Min(p => Math.Min(Math.Log10(p.Predicted), Math.Log10(p.Actual)));
        var hi = points.Max(p => Math.Max(Math.Log10(p.Predicted), Math.Log10(p.Actual)));
        var diagonal = plot.Add.Line(lo, lo, hi, hi);
        diagonal.Color = Plum;
        diagonal.LinePattern = LinePattern.Dashed;
        diagonal.LegendText = "predicted = actual";
        plot.XLabel("predicted median (log10 core-hours)");
        plot.YLabel("actual (log10 core-hours)");
        plot.ShowLegend();
        return plot;
    }

    private static string Html(ReportData data, IReadOnlyList<(string Name, string Title, string Caption)> figures, IReadOnlyDictionary<string, string> images)
    {
        string E(string s) => WebUtility.HtmlEncode(s);
        string N(double v, int d = 0) => v.ToString("N" + d.ToString(CultureInfo.InvariantCulture), CultureInfo.InvariantCulture);
        var b = new StringBuilder();
        b.Append("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\"><title>").Append(E(data.Campaign)).Append(" - campaign report</title>\n");
        b.Append("<style>body{font-family:'DejaVu Sans',Verdana,sans-serif;color:#23313F;max-width:960px;margin:2em auto;line-height:1.45}"
            + "h1{color:#1B7F79;border-bottom:3px solid #D98C1F;padding-bottom:.2em}h2{color:#23313F;margin-top:1.6em}"
            + "figure{margin:1em 0}figcaption{font-size:.9em;color:#555}img{max-width:100%;border:1px solid #E4E1DA}"
            + "table{border-collapse:collapse;font-size:.85em;width:100%}th,td{border-bottom:1px solid #E4E1DA;padding:.25em .5em;text-align:right}"
            + "th:first-child,td:first-child{text-align:left}.note{background:#FBF3E6;border-left:4px solid #D98C1F;padding:.5em 1em}"
            + "@media print{h2{page-break-before:auto}figure{page-break-inside:avoid}}</style></head>\n<body>\n");
        b.Append("<h1>").Append(E(data.Campaign)).Append("</h1>\n<p>Report generated ").Append(data.GeneratedAt.ToString("yyyy-MM-dd HH:mm", CultureInfo.InvariantCulture)).Append(" UTC by campaign.</p>\n");
        b.Append("<p class=\"note\">Costs and dates are statistical estimates from the group's own run history and a simulation of the queues; the allocating site's charging rules and policies decide what is charged, and queue behaviour at a real site can differ.</p>\n");
        if (data.Forecast is { } f)
        {
            b.Append("<h2>Forecast</h2>\n<p>Finish of the campaign: P10 ").Append(E(D(f.Finish.P10))).Append(", P50 ").Append(E(D(f.Finish.P50))).Append(", P90 ").Append(E(D(f.Finish.P90)))
                .Append(". Probability that the plan fits its allocations: ").Append(N(f.ProbabilityFits * 100, 1)).Append("% (").Append(f.Replicas).Append(" replicas).</p>\n");
        }

        foreach (var (name, title, caption) in figures)
        {
            b.Append("<h2>").Append(E(title)).Append("</h2>\n<figure><img src=\"data:image/png;base64,").Append(images[name]).Append("\" alt=\"").Append(E(title)).Append("\" width=\"900\" height=\"480\">")
                .Append("<figcaption>").Append(E(caption)).Append(" Also as <a href=\"").Append(name).Append(".svg\">SVG</a> and <a href=\"").Append(name).Append(".png\">PNG</a>.</figcaption></figure>\n");
        }

        b.Append("<h2>Proposal table</h2>\n<table><thead><tr><th>configuration</th><th>level</th><th>cluster</th><th>median core-h</th><th>90% interval</th><th>charged core-h</th><th>legs</th></tr></thead><tbody>\n");
        foreach (var r in data.Proposal)
        {
            b.Append("<tr><td>").Append(E(r.Id)).Append("</td><td>").Append(r.Level).Append("</td><td>").Append(E(r.Cluster)).Append("</td><td>").Append(N(r.Median)).Append("</td><td>")
                .Append(N(r.Low)).Append(" - ").Append(N(r.High)).Append("</td><td>").Append(N(r.Charged)).Append("</td><td>").Append(r.Legs).Append("</td></tr>\n");
        }

        b.Append("<tr><th>total</th><th></th><th></th><th>").Append(N(data.Proposal.Sum(r => r.Median))).Append("</th><th></th><th>").Append(N(data.Proposal.Sum(r => r.Charged))).Append("</th><th>")
            .Append(data.Proposal.Sum(r => r.Legs)).Append("</th></tr></tbody></table>\n<p>The total of medians is not the median of the total; see <code>campaign estimate</code> for the total's interval.</p>\n");
        b.Append("<script>window.addEventListener('load',function(){var ok=Array.from(document.images).every(function(i){return i.complete&&i.naturalWidth>0;});document.body.setAttribute('data-images',ok?'ok':'broken');});</script>\n");
        b.Append("</body></html>\n");
        return b.ToString();

        static string D(DateTimeOffset? d) => d?.ToString("yyyy-MM-dd", CultureInfo.InvariantCulture) ?? "not within the allocation";
    }
}
