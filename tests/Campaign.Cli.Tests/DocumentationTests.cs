using System.CommandLine;
using Campaign.Cli.Tests.Support;

namespace Campaign.Cli.Tests;

public class DocumentationTests
{
    [Fact]
    public void The_command_reference_mentions_every_command_and_option()
    {
        var docs = File.ReadAllText(Path.Combine(RepositoryRoot.Path, "docs", "cli.md"));
        var root = new CampaignApp(TextWriter.Null, TextWriter.Null, FixedTime.Default, ".").BuildCommands();
        var missing = new List<string>();
        void Walk(Command command, string path)
        {
            foreach (var sub in command.Subcommands)
            {
                var name = (path + " " + sub.Name).Trim();
                if (!docs.Contains("campaign " + name, StringComparison.Ordinal))
                {
                    missing.Add("command: campaign " + name);
                }

                foreach (var option in sub.Options.Where(o => o.Name.StartsWith("--", StringComparison.Ordinal) && o.Name != "--help"))
                {
                    if (!docs.Contains("`" + option.Name, StringComparison.Ordinal))
                    {
                        missing.Add($"option: {option.Name} of campaign {name}");
                    }
                }

                Walk(sub, name);
            }
        }

        Walk(root, "");
        foreach (var option in root.Options.Where(o => o.Name.StartsWith("--", StringComparison.Ordinal) && o.Name is not ("--help" or "--version")))
        {
            if (!docs.Contains("`" + option.Name, StringComparison.Ordinal))
            {
                missing.Add("global option: " + option.Name);
            }
        }

        Assert.Empty(missing);
    }
}
