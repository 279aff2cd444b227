using Campaign.Cli.Tests.Support;
using Microsoft.Data.Sqlite;

namespace Campaign.Cli.Tests;

/// <summary>campaign select on the demo workspace (invented data).</summary>
public class SelectCommandTests
{
    private static TempFolder Demo()
    {
        var folder = new TempFolder();
        Assert.Equal(0, CliRun.Demo(folder.Path, "ws").ExitCode);
        return folder;
    }

    [Fact]
    public void Json_carries_the_selection_its_cost_budget_objective_and_bound()
    {
        using var folder = Demo();
        var run = CliRun.Of(folder.Path, "--dir", "ws", "select", "ws/candidates.csv", "--budget", "1500000", "--quantile", "0.8", "--json");
        Assert.Equal(0, run.ExitCode);
        var json = run.Json();
        var selected = json.GetProperty("selected").EnumerateArray().Select(e => e.GetString()).ToList();
        Assert.Contains("sm-q1-a00", selected); // the must row
        Assert.True(json.GetProperty("cost").GetDouble() <= json.GetProperty("budget").GetDouble());
        Assert.Equal(1500000, json.GetProperty("budget").GetDouble());
        var objective = json.GetProperty("value").GetDouble();
        var bound = json.GetProperty("upper_bound").GetDouble();
        Assert.InRange(objective, 0.5, 1);
        Assert.True(bound >= objective && bound <= 1);
        Assert.Equal((bound - objective) / bound, json.GetProperty("gap").GetDouble(), 12);
    }

    [Fact]
    public void Allocations_give_one_budget_per_cluster_and_an_assignment()
    {
        using var folder = Demo();
        var json = CliRun.Of(folder.Path, "--dir", "ws", "select", "ws/candidates.csv", "--json").Json();
        var pools = json.GetProperty("pools").EnumerateArray().ToDictionary(p => p.GetProperty("name").GetString()!, p => p);
        Assert.Equal(new[] { "gunwale", "halyard" }, pools.Keys.Order());
        Assert.Equal(40_000 * 48, pools["gunwale"].GetProperty("capacity").GetDouble());
        Assert.All(pools.Values, p => Assert.True(p.GetProperty("used").GetDouble() <= p.GetProperty("capacity").GetDouble()));
        var assignment = json.GetProperty("assignment");
        Assert.All(json.GetProperty("selected").EnumerateArray(), id => Assert.True(assignment.TryGetProperty(id.GetString()!, out _)));
    }

    [Fact]
    public void Must_rows_beyond_the_budget_are_refused_with_their_names()
    {
        using var folder = Demo();
        var run = CliRun.Of(folder.Path, "--dir", "ws", "select", "ws/candidates.csv", "--budget", "1000");
        Assert.Equal(2, run.ExitCode);
        Assert.Contains("must runs do not fit the budget: sm-q1-a00", run.Err);
    }

    [Fact]
    public void Excluded_and_capped_selections_are_respected()
    {
        using var folder = Demo();
        var json = CliRun.Of(folder.Path, "--dir", "ws", "select", "ws/candidates.csv", "--exclude", "sm-q1-a06,sm-q3-a08", "--max-runs", "4", "--json").Json();
        var selected = json.GetProperty("selected").EnumerateArray().Select(e => e.GetString()).ToList();
        Assert.True(selected.Count <= 4);
        Assert.DoesNotContain("sm-q1-a06", selected);
        Assert.DoesNotContain("sm-q3-a08", selected);
    }

    [Fact]
    public void Value_objective_is_solved_exactly_and_says_so()
    {
        using var folder = Demo();
        var json = CliRun.Of(folder.Path, "--dir", "ws", "select", "ws/candidates.csv", "--objective", "value", "--budget", "3000000", "--json").Json();
        Assert.StartsWith("exact:", json.GetProperty("method").GetString());
        Assert.Equal(json.GetProperty("value").GetDouble(), json.GetProperty("upper_bound").GetDouble());
    }

    [Fact]
    public void Re_planning_keeps_runs_that_have_started_names_them_and_takes_their_cost_off_the_budget()
    {
        using var folder = Demo(); // the demo saved plans 1 and 2 (a re-plan without two configurations)
        string started;
        using (var connection = new SqliteConnection($"Data Source={Path.Combine(folder.Path, "ws", "campaign.db")};Pooling=False"))
        {
            connection.Open();
            using var command = connection.CreateCommand();
            command.CommandText = "SELECT config_id FROM plan_entries WHERE plan_id = 2 AND kind = 'run' ORDER BY config_id LIMIT 1";
            started = (string)command.ExecuteScalar()!;
        }

        Assert.Equal(0, CliRun.Live(folder.Path, "--dir", "ws", "track", "--on", "workbench", "--cores", "1", "--only", started).ExitCode);
        var tick = CliRun.Live(folder.Path, "--dir", "ws", "tick", "--json").Json();
        Assert.True(tick.GetProperty("submitted").GetInt32() > 0);

        // Excluding it without --withdraw is refused, and nothing is saved.
        var excluded = CliRun.Of(folder.Path, "--dir", "ws", "select", "ws/candidates.csv", "--budget", "2500000", "--exclude", started, "--save");
        Assert.Equal(2, excluded.ExitCode);
        Assert.Contains($"--exclude {started}: it is tracked", excluded.Err, StringComparison.Ordinal);

        // A new plan with little budget keeps it, and says so.
        var run = CliRun.Of(folder.Path, "--dir", "ws", "select", "ws/candidates.csv", "--budget", "2500000", "--save", "--json");
        Assert.True(run.ExitCode == 0, run.Err);
        var json = run.Json();
        Assert.Equal(3, json.GetProperty("plan_id").GetInt64());
        var carried = json.GetProperty("carried_over").EnumerateArray().ToList();
        Assert.Equal(started, Assert.Single(carried).GetProperty("config_id").GetString());
        Assert.Equal("workbench", carried[0].GetProperty("cluster").GetString());
        var remaining = carried[0].GetProperty("remaining_cost").GetDouble();
        Assert.True(remaining > 0);
        Assert.Equal(remaining, json.GetProperty("reserved").EnumerateObject().Sum(p => p.Value.GetDouble()), 6); // nothing charged yet: the reserve is what it still needs
        Assert.True(json.GetProperty("cost").GetDouble() <= 2_500_000 - remaining + 1e-6);
        var text = CliRun.Of(folder.Path, "--dir", "ws", "status").Out;
        Assert.Contains("Plan 3:", text);

        // Tracking the new plan adds the new runs only: the started ones are already there.
        var track = CliRun.Of(folder.Path, "--dir", "ws", "track", "--json").Json();
        Assert.NotEmpty(track.GetProperty("already_tracked").EnumerateArray());
        Assert.DoesNotContain(track.GetProperty("added").EnumerateArray(), a => a.GetProperty("run_id").GetString()!.StartsWith(started + ".", StringComparison.Ordinal));
        Assert.Equal(0, CliRun.Live(folder.Path, "--dir", "ws", "abandon", "--match", started + ".*").ExitCode);
    }
}
