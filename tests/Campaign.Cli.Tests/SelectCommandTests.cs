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
    public void Allocations_give_one_budget_per_machine_and_an_assignment()
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
    public void Re_planning_keeps_runs_that_have_started()
    {
        using var folder = Demo(); // the demo saved plan 1
        var db = Path.Combine(folder.Path, "ws", "campaign.db");
        using (var connection = new SqliteConnection($"Data Source={db};Pooling=False"))
        {
            connection.Open();
            using var command = connection.CreateCommand();
            command.CommandText = "UPDATE plan_runs SET status = 'running' WHERE config_id = 'sm-q6-a05'";
            Assert.Equal(1, command.ExecuteNonQuery());
        }

        // A new plan that excludes the started run and has little budget still keeps it.
        var run = CliRun.Of(folder.Path, "--dir", "ws", "select", "ws/candidates.csv", "--budget", "2500000", "--exclude", "sm-q6-a05", "--save", "--json");
        Assert.Equal(0, run.ExitCode);
        var json = run.Json();
        Assert.Contains("sm-q6-a05", json.GetProperty("selected").EnumerateArray().Select(e => e.GetString()));
        Assert.Equal(2, json.GetProperty("plan_id").GetInt64());
    }
}
