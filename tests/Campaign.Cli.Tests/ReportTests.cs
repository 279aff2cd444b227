using System.Buffers.Binary;
using System.Diagnostics;
using System.Xml.Linq;
using Campaign.Cli.Tests.Support;

namespace Campaign.Cli.Tests;

/// <summary>campaign report on the demo workspace (invented data): files, images, and the page in a real browser.</summary>
public sealed class ReportTests : IDisposable
{
    private static readonly string[] Plots = { "burn-down", "progress", "coverage", "coverage-spins", "cost-model" };
    private readonly TempFolder _folder = new();

    public void Dispose() => _folder.Dispose();

    private string Report()
    {
        Assert.Equal(0, CliRun.Demo(_folder.Path, "ws").ExitCode);
        var run = CliRun.Of(_folder.Path, "--dir", "ws", "report", "--out", "ws/report", "--candidates", "ws/candidates.csv", "--replicas", "200", "--json");
        Assert.True(run.ExitCode == 0, run.Err);
        return Path.Combine(_folder.Path, "ws", "report");
    }

    [Fact]
    public void Every_plot_is_a_valid_non_trivial_png_and_an_svg()
    {
        var folder = Report();
        foreach (var plot in Plots)
        {
            var png = File.ReadAllBytes(Path.Combine(folder, plot + ".png"));
            // PNG signature and IHDR (PNG specification, ISO/IEC 15948): width and height are big-endian at bytes 16 and 20.
            Assert.Equal(new byte[] { 0x89, 0x50, 0x4E, 0x47, 0x0D, 0x0A, 0x1A, 0x0A }, png[..8]);
            Assert.Equal("IHDR", System.Text.Encoding.ASCII.GetString(png, 12, 4));
            Assert.Equal(900, BinaryPrimitives.ReadInt32BigEndian(png.AsSpan(16)));
            Assert.Equal(480, BinaryPrimitives.ReadInt32BigEndian(png.AsSpan(20)));
            Assert.True(png.Length > 10_000, $"{plot}.png has only {png.Length} bytes");
            var svg = XDocument.Load(Path.Combine(folder, plot + ".svg"));
            Assert.Equal("svg", svg.Root!.Name.LocalName);
            Assert.Contains("<text", File.ReadAllText(Path.Combine(folder, plot + ".svg")));
        }

        var html = File.ReadAllText(Path.Combine(folder, "report.html"));
        Assert.Equal(5, html.Split("data:image/png;base64,").Length - 1);
        Assert.Contains("sm-q10-a00", html);
        Assert.Contains("the allocating site's charging rules", html);
    }

    /// <summary>Every text an SVG draws (axis labels, tick labels, legend entries, titles), trimmed.</summary>
    internal static IReadOnlyList<string> Texts(string svgPath) =>
        XDocument.Load(svgPath).Descendants().Where(e => e.Name.LocalName == "text").Select(e => e.Value.Trim()).Where(t => t.Length > 0).ToList();

    [Fact]
    public void The_plots_have_labelled_axes_iso_dates_and_legends_that_name_what_they_draw()
    {
        var folder = Report();
        var burn = Texts(Path.Combine(folder, "burn-down.svg"));
        Assert.Contains("date (UTC)", burn);
        Assert.Contains("core-hours left", burn);
        foreach (var cluster in new[] { "halyard", "gunwale" })
        {
            Assert.Contains($"{cluster}: plan", burn);
            Assert.Contains($"{cluster}: charged", burn); // the actual charge is in the legend even before the first charge
            Assert.Contains($"{cluster}: forecast P10-P90", burn);
        }

        Assert.Contains("end of an allocation window", burn); // the demo's halyard allocation has quarterly windows
        var dates = burn.Where(t => System.Text.RegularExpressions.Regex.IsMatch(t, @"^\d{4}-\d{2}-\d{2}$")).ToList();
        Assert.True(dates.Count >= 3, string.Join(" | ", burn));
        Assert.DoesNotContain(burn, t => System.Text.RegularExpressions.Regex.IsMatch(t, @"\d{1,2}/\d{1,2}/\d{4}"));

        var coverage = Texts(Path.Combine(folder, "coverage.svg"));
        Assert.Contains("mass ratio q", coverage);
        Assert.Contains("effective spin chi_eff", coverage);
        Assert.Contains("chosen (precessing)", coverage); // the small list has in-plane spins: their own marker
        Assert.Contains("candidates (aligned)", coverage);
        var spins = Texts(Path.Combine(folder, "coverage-spins.svg"));
        Assert.Contains("in-plane spin chi_perp (larger hole)", spins);
        Assert.Contains("effective spin chi_eff", spins);
        Assert.Contains("date (UTC)", Texts(Path.Combine(folder, "progress.svg")));
        Assert.Contains("simulated time t (M)", Texts(Path.Combine(folder, "progress.svg")));
    }

    [Fact]
    public void The_progress_plot_names_the_runs_with_the_most_left_and_counts_the_others()
    {
        var start = new DateTimeOffset(2027, 2, 1, 0, 0, 0, TimeSpan.Zero);
        var lines = Enumerable.Range(1, 9).Select(i => new Campaign.Reports.ProgressLine($"q{i}.res1", 5000,
            new[] { (start, 0.0), (start.AddDays(i), 400.0 * i) }, RemainingCost: 1000 * i)).ToList();
        var finished = new Campaign.Reports.CoveragePoint(2, 0.1);
        var data = new Campaign.Reports.ReportData("c", start.AddDays(10), Array.Empty<Campaign.Reports.AllocationLine>(), Array.Empty<Campaign.Reports.ChargePoint>(), null, lines,
            Array.Empty<Campaign.Reports.CoveragePoint>(), Array.Empty<Campaign.Reports.CoveragePoint>(), new[] { finished }, Array.Empty<Campaign.Reports.CoveragePoint>(),
            Array.Empty<Campaign.Reports.ModelCheckPoint>(), Array.Empty<Campaign.Reports.ProposalRow>());
        var folder = Path.Combine(_folder.Path, "plots");
        Campaign.Reports.ReportWriter.Write(data, folder);
        var texts = Texts(Path.Combine(folder, "progress.svg"));
        var named = Enumerable.Range(1, 9).Select(i => $"q{i}.res1").Where(texts.Contains).ToList();
        Assert.Equal(Enumerable.Range(4, Campaign.Reports.ReportWriter.NamedRuns).Select(i => $"q{i}.res1").Order(StringComparer.Ordinal), named.Order(StringComparer.Ordinal));
        Assert.Contains("others (3 runs)", texts);
        Assert.Contains(texts, t => t.StartsWith("2027-02-", StringComparison.Ordinal));
    }

    [Fact]
    public async Task The_page_loads_every_image_without_console_errors_in_headless_chromium()
    {
        const string browser = "/usr/bin/chromium";
        if (!File.Exists(browser))
        {
            Assert.True(Environment.GetEnvironmentVariable("CI") != "true", "chromium is not installed (.ci/apt-packages installs it)");
            return; // outside CI without Debian's chromium there is nothing to open the page with
        }

        var page = Path.Combine(Report(), "report.html");
        var profile = Directory.CreateTempSubdirectory("campaign-chromium-").FullName;
        var start = new ProcessStartInfo(browser) { RedirectStandardOutput = true, RedirectStandardError = true, UseShellExecute = false };
        foreach (var argument in new[]
        {
            "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run", "--disable-background-networking",
            "--disable-component-update", "--disable-sync", "--user-data-dir=" + profile, "--enable-logging=stderr", "--v=0",
            "--virtual-time-budget=5000", "--dump-dom", "file://" + page,
        })
        {
            start.ArgumentList.Add(argument);
        }

        using var process = Process.Start(start)!;
        var dom = process.StandardOutput.ReadToEndAsync();
        var log = process.StandardError.ReadToEndAsync();
        using var timeout = new CancellationTokenSource(TimeSpan.FromMinutes(2));
        await process.WaitForExitAsync(timeout.Token);
        Directory.Delete(profile, true);
        Assert.Contains("data-images=\"ok\"", await dom);
        var consoleErrors = (await log).Split('\n').Where(l => l.Contains("CONSOLE", StringComparison.Ordinal) && (l.Contains("Uncaught", StringComparison.Ordinal) || l.Contains("ERROR", StringComparison.Ordinal))).ToList();
        Assert.Empty(consoleErrors);
    }
}
