using System.Text.Json;
using Campaign.Cli.Tests.Support;

namespace Campaign.Cli.Tests.Reliability;

/// <summary>
/// Nothing from a file or a path is ever read by a shell or taken as an option; the workspace keeps its secrets
/// from other users; notification commands get events on standard input.
/// </summary>
[Collection("tracking")]
public sealed class SecurityTests : IDisposable
{
    private readonly TempFolder _folder = new();

    public void Dispose() => _folder.Dispose();

    private static readonly string[] Hostile =
    {
        "--wrap=touch PWNED", "-x", "; rm -rf ~", "a; touch PWNED", "$(touch PWNED)", "`touch PWNED`", "a\nb", "../../escape", "..",
        "a/b", "a b", "a|b", "a&b", "a>PWNED", "'quoted'", "\"dq\"", "a*b", "~root", "",
    };

    [Fact]
    public void Hostile_configuration_ids_are_refused_with_their_location_and_change_nothing()
    {
        Assert.Equal(0, CliRun.Demo(_folder.Path, "ws").ExitCode);
        var db = Path.Combine(_folder.Path, "ws", "campaign.db");
        var before = File.ReadAllBytes(db);
        foreach (var id in Hostile)
        {
            var quoted = "\"" + id.Replace("\"", "\"\"", StringComparison.Ordinal) + "\"";
            File.WriteAllText(Path.Combine(_folder.Path, "bad.csv"), "id,q,chi1z,chi2z,omega0\nok-1,2,0,0,0.018\n" + quoted + ",2,0,0,0.018\n");
            foreach (var command in new[] { "estimate", "select" })
            {
                var run = CliRun.Of(_folder.Path, "--dir", "ws", command, "bad.csv", "--save");
                if (command == "estimate")
                {
                    run = CliRun.Of(_folder.Path, "--dir", "ws", command, "bad.csv");
                }

                Assert.True(run.ExitCode == 2, $"{command} with id {JsonSerializer.Serialize(id)}: exit {run.ExitCode}\n{run.Err}");
                Assert.Contains("bad.csv:3:", run.Err, StringComparison.Ordinal);
                Assert.Contains(id.Trim().Length == 0 ? "expected a non-empty identifier" : "expected an id of 1 to 48 characters", run.Err, StringComparison.Ordinal);
            }
        }

        Assert.Equal(before, File.ReadAllBytes(db));
        Assert.Empty(Directory.EnumerateFiles(_folder.Path, "PWNED", SearchOption.AllDirectories));
    }

    [Fact]
    public void A_workspace_whose_path_is_full_of_shell_syntax_runs_its_jobs_and_runs_nothing_else()
    {
        // Spaces, quotes, command substitution, a semicolon and a newline in the folder name: every command the tool
        // starts gets it as one argument or one environment value, never through a shell.
        var name = "ws $(touch PWNED) `touch PWNED`; touch PWNED 'q\" \nline2 --wrap=x";
        Assert.Equal(0, CliRun.Of(_folder.Path, "demo", name, "--skip-run", "--candidates", CliRun.SmallCandidates).ExitCode);
        var workspace = Path.Combine(_folder.Path, name);
        try
        {
            Assert.Equal(0, CliRun.Live(_folder.Path, "--dir", workspace, "track", "--on", "workbench", "--cores", "1", "--only", "sm-q1-a00", "--rehearsal").ExitCode);
            var deadline = DateTime.UtcNow + TimeSpan.FromSeconds(120);
            while (DateTime.UtcNow < deadline)
            {
                var tick = CliRun.Live(_folder.Path, "--dir", workspace, "tick", "--json");
                Assert.True(tick.ExitCode == 0, tick.Err);
                if (tick.Json().GetProperty("active").GetInt32() == 0)
                {
                    break;
                }

                Thread.Sleep(700);
            }

            var runs = CliRun.Live(_folder.Path, "--dir", workspace, "status", "--json").Json().GetProperty("runs").EnumerateArray().ToList();
            Assert.Equal(3, runs.Count);
            Assert.All(runs, r => Assert.Equal("finished", r.GetProperty("state").GetString()));
            Assert.Empty(Directory.EnumerateFiles(_folder.Path, "PWNED", SearchOption.AllDirectories));
            Assert.False(File.Exists(Path.Combine(Environment.CurrentDirectory, "PWNED")));
        }
        finally
        {
            LocalJobs.KillAll(workspace);
        }
    }

    [Fact]
    public void The_workspace_database_and_config_are_readable_by_their_owner_only()
    {
        Assert.Equal(0, CliRun.Of(_folder.Path, "init", "ws").ExitCode);
        foreach (var profile in Directory.GetFiles(Path.Combine(RepositoryRoot.Path, "cluster-profiles"), "*.toml"))
        {
            File.Copy(profile, Path.Combine(_folder.Path, "ws", "clusters", Path.GetFileName(profile)), overwrite: true); // the clusters the demo's logs ran on
        }

        Assert.Equal(0, CliRun.Of(_folder.Path, "--dir", "ws", "logs", "import", Path.Combine(RepositoryRoot.Path, "demo-campaign", "run-logs.csv")).ExitCode);
        const UnixFileMode ownerOnly = UnixFileMode.UserRead | UnixFileMode.UserWrite;
        foreach (var file in new[] { "campaign.toml", "campaign.db" })
        {
            Assert.Equal(ownerOnly, File.GetUnixFileMode(Path.Combine(_folder.Path, "ws", file)));
        }

        // SQLite's side files take the database's mode.
        foreach (var side in Directory.EnumerateFiles(Path.Combine(_folder.Path, "ws"), "campaign.db-*"))
        {
            Assert.Equal(ownerOnly, File.GetUnixFileMode(side) & ~UnixFileMode.None);
        }
    }

    [Fact]
    public void Notification_commands_get_the_event_on_standard_input_and_no_arguments()
    {
        Assert.Equal(0, CliRun.Demo(_folder.Path, "ws").ExitCode);
        var config = Path.Combine(_folder.Path, "ws", "campaign.toml");
        File.WriteAllText(config, File.ReadAllText(config).Replace("[tracking]\n", "[tracking]\nnotify_command = [\"/bin/sh\", \"-c\", \"cat >> events.jsonl; echo >> events.jsonl; echo $# >> argc.txt\", \"notify\"]\n", StringComparison.Ordinal));
        Assert.Equal(0, CliRun.Live(_folder.Path, "--dir", "ws", "track", "--on", "workbench", "--cores", "1", "--only", "sm-q1-a00", "--rehearsal").ExitCode);
        // The cycle submits the runs: each state change is announced, with its reason, on stdin only.
        try
        {
            Assert.Equal(0, CliRun.Live(_folder.Path, "--dir", "ws", "tick").ExitCode);
        }
        finally
        {
            CliRun.Live(_folder.Path, "--dir", "ws", "abandon", "sm-q1-a00.res1.r1", "sm-q1-a00.res2.r1", "sm-q1-a00.res3.r1");
            LocalJobs.KillAll(Path.Combine(_folder.Path, "ws"));
        }

        var events = File.ReadAllLines(Path.Combine(_folder.Path, "ws", "events.jsonl")).Where(l => l.Length > 0).Select(l => JsonDocument.Parse(l).RootElement).ToList();
        Assert.Contains(events, e => e.GetProperty("run_id").GetString() == "sm-q1-a00.res1.r1");
        Assert.All(File.ReadAllLines(Path.Combine(_folder.Path, "ws", "argc.txt")), line => Assert.Equal("0", line));
    }
}
