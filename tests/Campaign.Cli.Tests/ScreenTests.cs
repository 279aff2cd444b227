using Campaign.Cli.Output;
using Campaign.Cli.Tests.Support;

namespace Campaign.Cli.Tests;

/// <summary>
/// What a coordinator sees: the default screens fit 100 columns and say what to act on, --detail gives the full
/// sheets, numbers have thousands separators unless --plain-numbers, amounts are read as people write them, and the
/// saved plan can be shown, exported and compared. On the demo workspace (invented data).
/// </summary>
public sealed class ScreenTests : IDisposable
{
    private readonly TempFolder _folder = new();

    public ScreenTests()
    {
        Assert.Equal(0, CliRun.Demo(_folder.Path, "ws").ExitCode);
        Assert.Equal(0, CliRun.Of(_folder.Path, "--dir", "ws", "track", "--on", "workbench", "--cores", "1", "--only", "sm-q1-a00").ExitCode);
    }

    public void Dispose() => _folder.Dispose();

    private CliRun Run(params string[] args) => CliRun.Of(_folder.Path, new[] { "--dir", "ws" }.Concat(args).ToArray());

    /// <summary>The demo's full candidate list (120 rows, larger costs and longer ids than the small one).</summary>
    private static string Full => Path.Combine(RepositoryRoot.Path, "demo-campaign", "candidates.csv");

    public static TheoryData<string> Screens => new()
    {
        "status", "select ws/candidates.csv", "model fit", "model show", "estimate ws/candidates.csv", "length --candidates ws/candidates.csv",
        "length --q 4 --chi1z 0.5 --omega0 0.016", "forecast --replicas 200", "plan show", "plan diff", "check", "clusters", "logs list",
        "estimate " + Full + " --ecc-trials 2", "select " + Full + " --quantile 0.8", "length --candidates " + Full,
    };

    [Theory]
    [MemberData(nameof(Screens))]
    public void Every_default_screen_fits_in_100_columns(string command)
    {
        var run = Run(command.Split(' '));
        Assert.True(run.ExitCode == 0, run.Err);
        var wide = run.Out.Split('\n').Where(l => l.Length > Screen.Width).ToList();
        Assert.True(wide.Count == 0, $"{command}: {wide.Count} lines wider than {Screen.Width}, the first: {wide.FirstOrDefault()}");
    }

    [Fact]
    public void The_short_sheets_leave_the_statistics_to_detail()
    {
        var fit = Run("model", "show").Out;
        Assert.Contains("what drives the cost", fit);
        Assert.DoesNotContain("CV MSE", fit);
        Assert.DoesNotContain("Cook's distance >", fit);
        var full = Run("model", "show", "--detail").Out;
        Assert.Contains("CV MSE (ln)", full);
        Assert.Contains("std. error", full);

        var select = Run("select", "ws/candidates.csv").Out;
        Assert.DoesNotContain("Method:", select);
        Assert.DoesNotContain("cost per unit gain", select);
        Assert.Contains("Method:", Run("select", "ws/candidates.csv", "--detail").Out);

        var length = Run("length", "--q", "4", "--omega0", "0.016").Out;
        Assert.DoesNotContain("TaylorT4 3.5PN to x", length);
        Assert.Contains("TaylorT4 3.5PN to x", Run("length", "--q", "4", "--omega0", "0.016", "--detail").Out);
    }

    [Fact]
    public void The_caution_is_said_once_per_command()
    {
        foreach (var command in new[] { "estimate ws/candidates.csv", "select ws/candidates.csv", "model show" })
        {
            var text = Run(command.Split(' ')).Out;
            Assert.Equal(1, text.Split("charging rules").Length - 1);
        }
    }

    [Fact]
    public void Numbers_are_grouped_in_thousands_unless_plain_numbers_is_given()
    {
        var grouped = Run("check").Out;
        Assert.Contains("12,000,000", grouped);
        var plain = Run("check", "--plain-numbers").Out;
        Assert.Contains("12000000", plain);
        Assert.DoesNotContain("12,000,000", plain);
    }

    [Fact]
    public void Singular_and_plural_agree()
    {
        var status = Run("status").Out;
        Assert.Contains("3 runs:", status);
        Assert.DoesNotMatch(@"\b1 runs\b|\b1 cores\b|\b1 rows\b", status + Run("track", "--on", "workbench", "--cores", "1", "--only", "sm-q2-a00").Out);
    }

    [Theory]
    [InlineData("2.5M")]
    [InlineData("2,500,000")]
    [InlineData("2_500_000")]
    [InlineData("2.5e6")]
    [InlineData("2500k")]
    public void A_budget_is_read_as_people_write_it(string budget)
    {
        var run = Run("select", "ws/candidates.csv", "--budget", budget, "--json");
        Assert.True(run.ExitCode == 0, run.Err);
        // The budget the selection used is the plain number's (less what the tracked run still needs, taken off first).
        var plain = Run("select", "ws/candidates.csv", "--budget", "2500000", "--json").Json();
        Assert.Equal(plain.GetProperty("budget").GetDouble(), run.Json().GetProperty("budget").GetDouble());
        Assert.Equal(2_500_000, plain.GetProperty("budget").GetDouble() + plain.GetProperty("reserved").EnumerateObject().Sum(r => r.Value.GetDouble()), 6);
    }

    [Fact]
    public void A_bad_budget_is_refused_in_plain_words()
    {
        var run = Run("select", "ws/candidates.csv", "--budget", "lots");
        Assert.Equal(2, run.ExitCode);
        Assert.Contains("--budget = lots: expected an amount such as 2500000, 2,500,000, 2_500_000, 2.5e6, 2.5M or 250k", run.Err, StringComparison.Ordinal);
        Assert.DoesNotContain("System.", run.Err, StringComparison.Ordinal);
    }

    [Fact]
    public void Status_shows_a_batch_systems_own_state_only_labelled_as_its_own()
    {
        var detail = Run("status", "--detail").Out;
        Assert.DoesNotMatch(@"\d+:(Completed|Pending|Running)", detail);
        var json = Run("status", "--json").Json();
        var states = json.GetProperty("runs").EnumerateArray().Select(r => r.GetProperty("state").GetString()).ToList();
        Assert.All(states, s => Assert.Contains(s, new[] { "planned", "waiting_budget", "queued", "running", "finished", "held", "failed" }));
        Assert.All(json.GetProperty("runs").EnumerateArray(), r => Assert.Matches(@"^sm-q1-a00\.res\d$", r.GetProperty("id").GetString()!));
    }

    [Fact]
    public void The_demos_two_plan_versions_can_be_shown_exported_and_compared()
    {
        var show = Run("plan", "show", "--json").Json();
        Assert.Equal(2, show.GetProperty("plan_id").GetInt64());
        Assert.Equal(new long[] { 1, 2 }, show.GetProperty("versions").EnumerateArray().Select(v => v.GetInt64()));
        var rows = show.GetProperty("rows").EnumerateArray().ToList();
        Assert.Contains(rows, r => r.GetProperty("config_id").GetString() == "sm-q1-a00" && r.GetProperty("standing").GetString() == "active");
        Assert.Contains("standing", Run("plan", "show").Out);
        Assert.DoesNotContain("standing", Run("plan", "show", "--version", "1").Out); // an older version has no standing

        var csv = Run("plan", "export", "--version", "1").Out.Split('\n', StringSplitOptions.RemoveEmptyEntries);
        Assert.Equal("configuration,res,kind,cluster,cores,core_hours_median,core_hours_high,cost,wall_hours,legs,target_m,standing", csv[0]);
        Assert.All(csv.Skip(1), l => Assert.Equal(12, l.Split(',').Length)); // raw numbers: no thousands separators
        Assert.StartsWith("Plan 1, saved", Run("plan", "export", "--version", "1", "--format", "md").Out);
        var file = Path.Combine(_folder.Path, "plan.json");
        Assert.Equal(0, Run("plan", "export", "--format", "json", "--out", file).ExitCode);
        Assert.Equal(rows.Count, System.Text.Json.JsonDocument.Parse(File.ReadAllText(file)).RootElement.GetProperty("rows").GetArrayLength());

        // The diff is what the two versions hold, configuration by configuration.
        var diff = Run("plan", "diff", "1", "2", "--json").Json();
        var one = Run("plan", "export", "--version", "1").Out.Split('\n', StringSplitOptions.RemoveEmptyEntries).Skip(1).Select(l => l.Split(',')[0]).ToHashSet();
        var two = Run("plan", "export", "--version", "2").Out.Split('\n', StringSplitOptions.RemoveEmptyEntries).Skip(1).Select(l => l.Split(',')[0]).ToHashSet();
        Assert.Equal(two.Except(one).Order(StringComparer.Ordinal), diff.GetProperty("added").EnumerateArray().Select(d => d.GetProperty("config_id").GetString()!));
        Assert.Equal(one.Except(two).Order(StringComparer.Ordinal), diff.GetProperty("dropped").EnumerateArray().Select(d => d.GetProperty("config_id").GetString()!));
        Assert.Equal(one.Intersect(two).Count(), diff.GetProperty("kept").GetArrayLength() + diff.GetProperty("carried_over").GetArrayLength());

        var bad = Run("plan", "show", "--version", "7");
        Assert.Equal(2, bad.ExitCode);
        Assert.Contains("--version = 7: expected a saved plan version, one of 1, 2", bad.Err, StringComparison.Ordinal);
    }
}
