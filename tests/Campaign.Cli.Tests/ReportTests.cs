using System.Buffers.Binary;
using System.Diagnostics;
using System.Xml.Linq;
using Campaign.Cli.Tests.Support;

namespace Campaign.Cli.Tests;

/// <summary>campaign report on the demo workspace (invented data): files, images, and the page in a real browser.</summary>
public sealed class ReportTests : IDisposable
{
    private static readonly string[] Plots = { "burn-down", "progress", "coverage", "cost-model" };
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
        Assert.Equal(4, html.Split("data:image/png;base64,").Length - 1);
        Assert.Contains("sm-q10-a00", html);
        Assert.Contains("the allocating site's charging rules", html);
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
