using System.CommandLine;
using Campaign.Cli.Tests.Support;

namespace Campaign.Cli.Tests;

public class CommandLineTests
{
    [Fact]
    public void Help_lists_every_command()
    {
        using var folder = new TempFolder();
        var run = CliRun.Of(folder.Path, "--help");
        Assert.Equal(0, run.ExitCode);
        foreach (var command in new[] { "init", "check", "length", "clusters", "demo" })
        {
            Assert.Contains("  " + command, run.Out);
        }
    }

    [Fact]
    public void Every_command_has_help_json_and_dir()
    {
        using var folder = new TempFolder();
        var root = new CampaignApp(TextWriter.Null, TextWriter.Null, FixedTime.Default, folder.Path).BuildCommands();
        var paths = new List<string[]>();
        void Walk(Command command, string[] path)
        {
            foreach (var sub in command.Subcommands)
            {
                var next = path.Append(sub.Name).ToArray();
                paths.Add(next);
                Walk(sub, next);
            }
        }

        Walk(root, Array.Empty<string>());
        Assert.True(paths.Count >= 6);
        foreach (var path in paths)
        {
            var run = CliRun.Of(folder.Path, path.Append("--help").ToArray());
            Assert.Equal(0, run.ExitCode);
            Assert.Contains("--json", run.Out);
            Assert.Contains("--dir", run.Out);
        }
    }

    [Theory]
    [InlineData("lenth")]
    [InlineData("length", "--q", "abc")]
    [InlineData("length", "--bogus")]
    public void Usage_errors_exit_with_1(params string[] args)
    {
        using var folder = new TempFolder();
        Assert.Equal(1, CliRun.Of(folder.Path, args).ExitCode);
    }

    [Fact]
    public void Options_that_exclude_each_other_are_a_usage_error()
    {
        using var folder = new TempFolder();
        var run = CliRun.Of(folder.Path, "length", "--candidates", "x.csv", "--q", "2");
        Assert.Equal(1, run.ExitCode);
        Assert.Equal("campaign: error: --candidates reads every configuration from the file: give it without --q, --chi*, --omega0 or --orbits\n", run.Err);
    }
}
