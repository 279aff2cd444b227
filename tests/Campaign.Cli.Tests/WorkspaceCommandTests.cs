using Campaign.Cli.Tests.Support;
using Microsoft.Data.Sqlite;

namespace Campaign.Cli.Tests;

public class WorkspaceCommandTests
{
    [Fact]
    public void Init_then_check_reports_the_new_workspace()
    {
        using var folder = new TempFolder();
        Assert.Equal(0, CliRun.Of(folder.Path, "init", "ws").ExitCode);
        var check = CliRun.Of(folder.Path, "--dir", "ws", "check", "--json");
        Assert.Equal(0, check.ExitCode);
        var json = check.Json();
        Assert.Equal("My campaign", json.GetProperty("name").GetString());
        Assert.Equal("ok", json.GetProperty("integrity").GetString());
        Assert.Equal(Campaign.Store.Schema.Migrations.Latest, json.GetProperty("schema_version").GetInt32());
        // A real workspace starts with the local workstation and a commented template, never the demo's invented clusters.
        Assert.Equal(new[] { "workbench" }, json.GetProperty("clusters").EnumerateArray().Select(c => c.GetString()));
        Assert.Equal(new[] { "cluster.toml.example", "workbench.toml" }, Directory.GetFiles(folder.File("ws/clusters")).Select(Path.GetFileName).Order(StringComparer.Ordinal));
        Assert.DoesNotContain("halyard", File.ReadAllText(folder.File("ws/campaign.toml")), StringComparison.Ordinal);
        Assert.Empty(json.GetProperty("notices").EnumerateArray());
    }

    [Fact]
    public void The_cluster_template_init_writes_is_a_valid_profile_once_uncommented()
    {
        using var folder = new TempFolder();
        Assert.Equal(0, CliRun.Of(folder.Path, "init", "ws").ExitCode);
        var fields = File.ReadAllLines(folder.File("ws/clusters/cluster.toml.example"))
            .SkipWhile(l => !l.StartsWith("# name = ", StringComparison.Ordinal))
            .Select(l => l[2..].Replace("\"NAME\"", "\"lanyard\"", StringComparison.Ordinal));
        File.WriteAllLines(folder.File("ws/clusters/lanyard.toml"), fields);
        var check = CliRun.Of(folder.Path, "--dir", "ws", "clusters", "check", "ws/clusters/lanyard.toml");
        Assert.True(check.ExitCode == 0, check.Err);
        Assert.Equal(2, CliRun.Of(folder.Path, "--dir", "ws", "clusters", "--json").Json().GetProperty("clusters").GetArrayLength()); // the .example is not read as a profile
    }

    [Fact]
    public void A_workspace_written_with_the_former_names_is_read_and_check_names_each_one_to_rename()
    {
        using var folder = new TempFolder();
        Assert.Equal(0, CliRun.Of(folder.Path, "init", "ws").ExitCode);
        Directory.Move(folder.File("ws/clusters"), folder.File("ws/machines"));
        var config = File.ReadAllText(folder.File("ws/campaign.toml"))
            .Replace("clusters = [", "machines = [", StringComparison.Ordinal)
            .Replace("default_cluster =", "default_machine =", StringComparison.Ordinal)
            + "\n[[allocation]]\nmachine = \"workbench\"\namount = 1000\nunit = \"core-hours\"\nstart = 2027-01-01\nend = 2027-12-31\n\n[tracking]\nsegment_minutes = 300\n";
        File.WriteAllText(folder.File("ws/campaign.toml"), config);

        var check = CliRun.Of(folder.Path, "--dir", "ws", "check", "--json");
        Assert.Equal(0, check.ExitCode);
        var notices = check.Json().GetProperty("notices").EnumerateArray().Select(n => n.GetString()!).ToList();
        Assert.Equal(5, notices.Count);
        Assert.Contains(notices, n => n.EndsWith("machines: the former name of the profiles' folder 'clusters'; read as that (rename it)", StringComparison.Ordinal));
        Assert.Contains(notices, n => n.EndsWith(": 'campaign.machines' is the former name of 'campaign.clusters'; read as that (rename it)", StringComparison.Ordinal));
        Assert.Contains(notices, n => n.EndsWith(": 'tracking.segment_minutes' is the former name of 'tracking.leg_minutes'; read as that (rename it)", StringComparison.Ordinal));
        Assert.Equal("workbench", check.Json().GetProperty("allocations")[0].GetProperty("cluster").GetString());
    }

    [Fact]
    public void Init_refuses_a_non_empty_folder_with_exit_2()
    {
        using var folder = new TempFolder();
        File.WriteAllText(folder.File("keep.txt"), "x");
        var run = CliRun.Of(folder.Path, "init", ".");
        Assert.Equal(2, run.ExitCode);
        Assert.Contains("the folder is not empty", run.Err);
    }

    [Fact]
    public void A_database_from_a_newer_build_is_a_runtime_failure_with_exit_3()
    {
        using var folder = new TempFolder();
        CliRun.Of(folder.Path, "init", ".");
        using (var connection = new SqliteConnection($"Data Source={folder.File("campaign.db")};Pooling=False"))
        {
            connection.Open();
            using var command = connection.CreateCommand();
            command.CommandText = "PRAGMA user_version = 42";
            command.ExecuteNonQuery();
        }

        var run = CliRun.Of(folder.Path, "check");
        Assert.Equal(3, run.ExitCode);
        Assert.Contains("campaign.db has schema version 42, written by a newer campaign", run.Err);
    }

    [Fact]
    public void Clusters_lists_the_built_in_profiles_and_check_locates_errors()
    {
        using var folder = new TempFolder();
        var list = CliRun.Of(folder.Path, "clusters", "--json");
        Assert.Equal(0, list.ExitCode);
        Assert.Equal(3, list.Json().GetProperty("clusters").GetArrayLength());

        File.WriteAllText(folder.File("m.toml"), "name = \"m\"\nbatch_system = \"slurm\"\ncores_per_node = 0\nmemory_per_node_gb = 4\nwall_limit_hours = 1\ncharge_whole_nodes = true\n");
        var check = CliRun.Of(folder.Path, "clusters", "check", "m.toml");
        Assert.Equal(2, check.ExitCode);
        Assert.Contains("m.toml:3:18: cores_per_node = 0: expected an integer from 1 to 100000", check.Err);
    }

    [Fact]
    public void Demo_creates_a_workspace_and_prints_the_lengths_of_every_candidate()
    {
        using var folder = new TempFolder();
        var run = CliRun.Demo(folder.Path, "demo-ws", "--json");
        Assert.Equal(0, run.ExitCode);
        var json = run.Json();
        var steps = json.GetProperty("steps");
        Assert.Equal(16, steps.GetProperty("lengths").GetProperty("runs").GetArrayLength());
        Assert.True(steps.GetProperty("model").GetProperty("n_runs").GetInt32() > 100);
        Assert.True(steps.GetProperty("estimate").GetProperty("runs").GetArrayLength() > 40);
        var select = steps.GetProperty("select");
        Assert.Equal(1, select.GetProperty("plan_id").GetInt64());
        Assert.True(select.GetProperty("upper_bound").GetDouble() >= select.GetProperty("value").GetDouble());
        // The demo re-plans once without two chosen configurations and compares the two versions.
        var diff = steps.GetProperty("plan_diff");
        Assert.Equal(1, diff.GetProperty("older").GetInt64());
        Assert.Equal(2, diff.GetProperty("newer").GetInt64());
        Assert.True(diff.GetProperty("dropped").GetArrayLength() >= 2);
        var forecast = steps.GetProperty("forecast");
        Assert.InRange(forecast.GetProperty("probability_fits").GetDouble(), 0, 1);
        Assert.Equal(1000, forecast.GetProperty("replicas").GetInt32());
        Assert.True(forecast.GetProperty("runs").GetArrayLength() > 20);
        Assert.True(File.Exists(Path.Combine(folder.Path, "demo-ws", "campaign.db")));
        Assert.Equal(0, CliRun.Of(folder.Path, "--dir", "demo-ws", "check").ExitCode);
    }

    [Fact]
    public void Forecast_of_tracked_runs_starts_from_their_state()
    {
        using var folder = new TempFolder();
        CliRun.Demo(folder.Path, "ws");
        Assert.Equal(0, CliRun.Of(folder.Path, "--dir", "ws", "track", "--on", "workbench", "--cores", "1", "--only", "sm-q1-a00").ExitCode);
        var json = CliRun.Of(folder.Path, "--dir", "ws", "forecast", "--replicas", "200", "--json").Json();
        // The whole rest of the plan: the three tracked runs from their state, every other plan run from its estimate.
        var plan = CliRun.Of(folder.Path, "--dir", "ws", "status", "--json").Json().GetProperty("plan");
        var left = plan.GetProperty("to_come").GetInt32() + plan.GetProperty("active").GetInt32() + plan.GetProperty("held").GetInt32();
        Assert.Equal(3, plan.GetProperty("active").GetInt32());
        Assert.Equal($"plan 2: {left} runs left (3 tracked, {left - 3} to come; 0 finished)", json.GetProperty("source").GetString());
        Assert.Equal(left, json.GetProperty("runs_left").GetInt32());
        Assert.Equal(left, json.GetProperty("runs").GetArrayLength());
        var workbench = json.GetProperty("runs").EnumerateArray().Where(r => r.GetProperty("cluster").GetString() == "workbench").Select(r => r.GetProperty("id").GetString()).Order(StringComparer.Ordinal);
        Assert.Equal(new[] { "sm-q1-a00.res1", "sm-q1-a00.res2", "sm-q1-a00.res3" }, workbench);
        Assert.Equal(2, CliRun.Of(folder.Path, "--dir", "ws", "forecast", "--replicas", "5").ExitCode);
    }

    [Fact]
    public void Backup_copies_a_consistent_workspace_that_opens_as_one_and_refuses_a_folder_in_use()
    {
        using var folder = new TempFolder();
        CliRun.Demo(folder.Path, "ws");
        Assert.Equal(0, CliRun.Of(folder.Path, "--dir", "ws", "track", "--on", "workbench", "--cores", "1", "--only", "sm-q1-a00").ExitCode);
        var json = CliRun.Of(folder.Path, "--dir", "ws", "backup", "copy", "--json").Json();
        Assert.Equal("ok", json.GetProperty("integrity").GetString());
        Assert.Contains("clusters/halyard.toml", json.GetProperty("files").EnumerateArray().Select(f => f.GetString()));
        Assert.Equal(UnixFileMode.UserRead | UnixFileMode.UserWrite, File.GetUnixFileMode(Path.Combine(folder.Path, "copy", "campaign.db")));

        // The copy is a workspace with the same history: same logs, plan and tracked runs.
        string Summary(string dir) => string.Join("|",
            CliRun.Of(folder.Path, "--dir", dir, "logs", "list", "--json").Json().GetProperty("runs").GetArrayLength(),
            CliRun.Of(folder.Path, "--dir", dir, "status", "--json").Json().GetProperty("runs").GetArrayLength());
        Assert.Equal(Summary("ws"), Summary("copy"));
        Assert.Equal(0, CliRun.Of(folder.Path, "--dir", "copy", "check").ExitCode);

        var again = CliRun.Of(folder.Path, "--dir", "ws", "backup", "copy");
        Assert.Equal(3, again.ExitCode);
        Assert.Contains("not empty", again.Err, StringComparison.Ordinal);
    }
}
