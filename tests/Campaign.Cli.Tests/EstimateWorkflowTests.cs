using System.Security.Cryptography;
using Campaign.Cli.Tests.Support;

namespace Campaign.Cli.Tests;

/// <summary>logs import, model fit/show and estimate on a real workspace (invented demo data).</summary>
public class EstimateWorkflowTests
{
    private static string DemoFile(string name) => Path.Combine(RepositoryRoot.Path, "demo-campaign", name);

    private static TempFolder Workspace()
    {
        var folder = new TempFolder();
        Assert.Equal(0, CliRun.Demo(folder.Path, "ws").ExitCode);
        return folder;
    }

    [Fact]
    public void Model_fit_json_carries_the_promised_fields()
    {
        using var folder = Workspace();
        var run = CliRun.Of(folder.Path, "--dir", "ws", "model", "fit", "--json");
        Assert.Equal(0, run.ExitCode);
        var json = run.Json();
        Assert.Equal(160, json.GetProperty("n_runs").GetInt32());
        Assert.Contains("ln_length", json.GetProperty("features").EnumerateArray().Select(f => f.GetString()));
        Assert.InRange(json.GetProperty("cv_median_abs_pct_error").GetDouble(), 5, 40);
        Assert.InRange(json.GetProperty("cv_interval_coverage").GetDouble(), 0.75, 1);
        var show = CliRun.Of(folder.Path, "--dir", "ws", "model", "show", "--json");
        Assert.Equal(json.GetProperty("id").GetInt64(), show.Json().GetProperty("id").GetInt64());
    }

    [Fact]
    public void Estimate_json_has_runs_per_level_and_a_total_with_an_interval()
    {
        using var folder = Workspace();
        var run = CliRun.Of(folder.Path, "--dir", "ws", "estimate", "ws/candidates.csv", "--json");
        Assert.Equal(0, run.ExitCode);
        var json = run.Json();
        var runs = json.GetProperty("runs").EnumerateArray().ToList();
        Assert.Equal(43, runs.Count); // candidates.csv: 11 configurations at 3 levels, 5 at 2
        foreach (var r in runs)
        {
            Assert.True(r.GetProperty("low").GetDouble() < r.GetProperty("median").GetDouble());
            Assert.True(r.GetProperty("median").GetDouble() < r.GetProperty("high").GetDouble());
            Assert.True(r.GetProperty("legs").GetInt32() >= 1);
        }

        var total = json.GetProperty("total");
        var sumOfMedians = runs.Sum(r => r.GetProperty("median").GetDouble());
        Assert.True(total.GetProperty("low").GetDouble() < total.GetProperty("median").GetDouble());
        Assert.True(total.GetProperty("median").GetDouble() < total.GetProperty("high").GetDouble());
        // The total of lognormal costs has its median above the sum of the per-run medians.
        Assert.True(total.GetProperty("median").GetDouble() > sumOfMedians);
        Assert.Contains("statistical estimates", json.GetProperty("caution").GetString());
    }

    [Fact]
    public void Estimate_writes_markdown_and_csv_for_a_proposal()
    {
        using var folder = Workspace();
        var md = CliRun.Of(folder.Path, "--dir", "ws", "estimate", "ws/candidates.csv", "--format", "md");
        Assert.Equal(0, md.ExitCode);
        Assert.StartsWith("| configuration | resolution | cluster |", md.Out);
        // Each configuration's subtotal is the sum of its rows' medians, as the JSON gives them.
        var runs = CliRun.Of(folder.Path, "--dir", "ws", "estimate", "ws/candidates.csv", "--json").Json().GetProperty("runs").EnumerateArray()
            .GroupBy(r => r.GetProperty("id").GetString()!).ToDictionary(g => g.Key, g => g.Sum(r => r.GetProperty("median").GetDouble()));
        var subtotals = md.Out.Split('\n').Where(l => l.StartsWith("| **", StringComparison.Ordinal)).ToList();
        Assert.Equal(runs.Count(r => r.Value > 0), subtotals.Count);
        foreach (var line in subtotals)
        {
            var cells = line.Split('|').Select(c => c.Trim().Trim('*')).ToArray();
            var id = cells[1][..^" total".Length];
            Assert.InRange(double.Parse(cells[8].Replace(",", "", StringComparison.Ordinal), System.Globalization.CultureInfo.InvariantCulture) - runs[id], -0.5, 0.5);
        }

        Assert.Contains("| halyard | ", md.Out);
        Assert.Contains("| all clusters | ", md.Out);
        var tex = CliRun.Of(folder.Path, "--dir", "ws", "estimate", "ws/candidates.csv", "--format", "tex");
        Assert.Equal(0, tex.ExitCode);
        var rows = tex.Out.Split('\n').TakeWhile(l => !l.StartsWith("\\end{tabular}", StringComparison.Ordinal)).Where(l => l.EndsWith("\\\\", StringComparison.Ordinal) || l.EndsWith("\\addlinespace", StringComparison.Ordinal)).ToList();
        Assert.Equal(md.Out.Split('\n').Count(l => l.StartsWith("| sm-", StringComparison.Ordinal) || l.StartsWith("| **", StringComparison.Ordinal)) + 1, rows.Count); // the rows and the header
        Assert.All(rows, r => Assert.Equal(10, System.Text.RegularExpressions.Regex.Matches(r, @"(?<!\\)&").Count));
        var csv = CliRun.Of(folder.Path, "--dir", "ws", "estimate", "ws/candidates.csv", "--format", "csv");
        Assert.Equal(0, csv.ExitCode);
        var lines = csv.Out.Split('\n', StringSplitOptions.RemoveEmptyEntries);
        Assert.Equal(44, lines.Length);
        Assert.All(lines, l => Assert.Equal(16, l.Split(',').Length));
    }

    [Fact]
    public void A_bad_log_file_imports_nothing_and_lists_every_problem()
    {
        using var folder = new TempFolder();
        CliRun.Demo(folder.Path, "ws");
        var db = Path.Combine(folder.Path, "ws", "campaign.db");
        var lines = File.ReadAllLines(DemoFile("run-logs.csv")).Take(6).ToList();
        lines[2] = lines[2].Replace(",halyard,", ",nowhere,", StringComparison.Ordinal).Replace(",gunwale,", ",nowhere,", StringComparison.Ordinal);
        lines[4] = lines[4].Replace("completed", "finished", StringComparison.Ordinal).Replace("failed", "finished", StringComparison.Ordinal).Replace("partial", "finished", StringComparison.Ordinal);
        File.WriteAllLines(Path.Combine(folder.Path, "bad.csv"), lines);
        var before = CliRun.Of(folder.Path, "--dir", "ws", "logs", "list", "--json").Json().GetProperty("runs").GetArrayLength();
        var hash = SHA256.HashData(File.ReadAllBytes(db));
        var run = CliRun.Of(folder.Path, "--dir", "ws", "logs", "import", "bad.csv");
        Assert.Equal(2, run.ExitCode);
        Assert.Contains("bad.csv:3:12: cluster = nowhere: expected a cluster with a profile: gunwale, halyard, workbench", run.Err);
        Assert.Contains("bad.csv:5:14: outcome = finished: expected completed, failed or partial", run.Err);
        Assert.Equal(hash, SHA256.HashData(File.ReadAllBytes(db)));
        Assert.Equal(before, CliRun.Of(folder.Path, "--dir", "ws", "logs", "list", "--json").Json().GetProperty("runs").GetArrayLength());
    }

    [Fact]
    public void A_repeated_run_id_is_refused_unless_replace()
    {
        using var folder = new TempFolder();
        CliRun.Demo(folder.Path, "ws");
        File.WriteAllLines(Path.Combine(folder.Path, "again.csv"), File.ReadAllLines(DemoFile("run-logs.csv")).Take(3));
        var refused = CliRun.Of(folder.Path, "--dir", "ws", "logs", "import", "again.csv");
        Assert.Equal(2, refused.ExitCode);
        Assert.Contains("again.csv:2:1: run_id = sr-001: expected a run id not yet in the workspace (use --replace to overwrite stored runs)", refused.Err);
        var replaced = CliRun.Of(folder.Path, "--dir", "ws", "logs", "import", "again.csv", "--replace", "--json");
        Assert.Equal(0, replaced.ExitCode);
        Assert.Equal(2, replaced.Json().GetProperty("replaced").GetInt32());
    }
}
