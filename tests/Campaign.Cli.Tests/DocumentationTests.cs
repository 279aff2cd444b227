using System.CommandLine;
using System.Text.RegularExpressions;
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

    private static Command Root() => new CampaignApp(TextWriter.Null, TextWriter.Null, FixedTime.Default, ".").BuildCommands();

    private static string Help(params string[] path)
    {
        var output = new StringWriter();
        new CampaignApp(output, TextWriter.Null, FixedTime.Default, ".").Run(path.Append("--help").ToArray());
        return output.ToString();
    }

    private static IEnumerable<string> Documents() =>
        Directory.EnumerateFiles(Path.Combine(RepositoryRoot.Path, "docs"), "*.md")
            .Append(Path.Combine(RepositoryRoot.Path, "README.md"))
            .Append(Path.Combine(RepositoryRoot.Path, "DEVELOPERS.md"))
            .Append(Path.Combine(RepositoryRoot.Path, "demo-campaign", "README.md"));

    /// <summary>Code in a Markdown text: fenced blocks and inline spans.</summary>
    private static IEnumerable<string> CodeOf(string markdown)
    {
        foreach (Match block in Regex.Matches(markdown, "```[a-z]*\\n(.*?)```", RegexOptions.Singleline))
        {
            yield return block.Groups[1].Value;
        }

        var prose = Regex.Replace(markdown, "```.*?```", "", RegexOptions.Singleline);
        foreach (Match span in Regex.Matches(prose, "`([^`]+)`"))
        {
            yield return span.Groups[1].Value;
        }
    }

    [Fact]
    public void Every_command_the_documentation_shows_exists()
    {
        var root = Root();
        var wrong = new List<string>();
        foreach (var file in Documents())
        {
            foreach (var code in CodeOf(File.ReadAllText(file)))
            {
                foreach (Match use in Regex.Matches(code, @"(?<![\w.-])campaign((?: [^\s;|&>]+)+)"))
                {
                    var words = use.Groups[1].Value.Split(' ', StringSplitOptions.RemoveEmptyEntries).ToList();
                    while (words.Count > 0 && words[0] is "--json" or "--dir")
                    {
                        words.RemoveRange(0, words[0] == "--dir" && words.Count > 1 ? 2 : 1);
                    }

                    if (words.Count == 0 || words[0].StartsWith("--", StringComparison.Ordinal) || words[0].StartsWith("__", StringComparison.Ordinal)
                        || !Regex.IsMatch(words[0], "^[a-z]+$") || words[0] is "tracking" or "is" or "for" or "to")
                    {
                        continue;
                    }

                    var command = root.Subcommands.FirstOrDefault(c => c.Name == words[0]);
                    if (command is null)
                    {
                        wrong.Add($"{Path.GetFileName(file)}: campaign {words[0]} (in `{use.Value}`)");
                        continue;
                    }

                    if (command.Subcommands.Count > 0 && command.Arguments.Count == 0 && words.Count > 1 && Regex.IsMatch(words[1], "^[a-z]+$")
                        && command.Subcommands.All(c => c.Name != words[1]))
                    {
                        wrong.Add($"{Path.GetFileName(file)}: campaign {words[0]} {words[1]} (in `{use.Value}`)");
                    }
                }
            }
        }

        Assert.Empty(wrong);
    }

    [Fact]
    public void Every_option_the_command_reference_documents_appears_in_that_commands_help()
    {
        var docs = File.ReadAllText(Path.Combine(RepositoryRoot.Path, "docs", "cli.md"));
        var root = Root();
        var global = Help();
        var wrong = new List<string>();
        var checkedOptions = 0;
        foreach (Match section in Regex.Matches(docs, @"^### `campaign ([a-z ]+?)(?: [A-Z\[-][^`\n]*)?`\n(.*?)(?=^#|\z)", RegexOptions.Multiline | RegexOptions.Singleline))
        {
            var path = section.Groups[1].Value.Trim().Split(' ');
            var help = Help(path);
            Assert.Contains("Usage:", help, StringComparison.Ordinal);
            var text = section.Value;
            foreach (var code in CodeOf(text))
            {
                // An option shown next to another command's name (e.g. the demo describing `track --on`) belongs to that command.
                var owner = root.Subcommands.Select(c => c.Name).FirstOrDefault(n => Regex.IsMatch(code, $"(^| ){n}( |$)") && n != path[0]);
                var ownerHelp = owner is null ? help : Help(owner);
                foreach (Match option in Regex.Matches(code, "(?<![\\w-])--[a-z][a-z0-9-]*"))
                {
                    checkedOptions++;
                    if (!Regex.IsMatch(ownerHelp + global, Regex.Escape(option.Value) + "(?![a-z0-9-])"))
                    {
                        wrong.Add($"{option.Value} documented under `campaign {string.Join(' ', path)}` but not in `campaign {owner ?? string.Join(' ', path)} --help`");
                    }
                }
            }
        }

        Assert.True(checkedOptions > 40, $"only {checkedOptions} options found: is the reference's layout still what this test reads?");
        Assert.Empty(wrong);
    }

    [Fact]
    public void The_format_reference_documents_every_field_and_column_the_readers_accept()
    {
        var docs = File.ReadAllText(Path.Combine(RepositoryRoot.Path, "docs", "formats.md"));
        // The workspace config's fields are the lists its reader passes to RejectUnknown (read from its source).
        var source = File.ReadAllText(Path.Combine(RepositoryRoot.Path, "src", "Campaign.Core", "Configuration", "WorkspaceConfigReader.cs"));
        var configFields = Regex.Matches(source, @"(?:RejectUnknown\(|string\[\] keys = \{)([^;]*?)[;}]", RegexOptions.Singleline)
            .SelectMany(m => Regex.Matches(m.Groups[1].Value, "\"([a-z0-9_]+)\"").Select(q => q.Groups[1].Value))
            .Distinct()
            .ToList();
        Assert.Contains("reconcile_seconds", configFields);
        Assert.Contains("extraction_radius_m", configFields);
        var missing = configFields.Where(f => !Regex.IsMatch(docs, $"(^|\\n|\\[|\\.)\\[*{f}\\]*( =|\\]|\\n)|`{f}`")).Select(f => "campaign.toml: " + f)
            .Concat(Campaign.Core.Configuration.ClusterProfileReader.Fields.Where(f => !docs.Contains($"`{f}`", StringComparison.Ordinal)).Select(f => "profile: " + f))
            .Concat(Campaign.Core.Configuration.CandidateReader.Columns.Where(f => !docs.Contains($"`{f}`", StringComparison.Ordinal)).Select(f => "candidates: " + f))
            .Concat(Campaign.Core.Configuration.RunLogReader.KnownColumns.Where(f => !docs.Contains($"`{f}`", StringComparison.Ordinal)).Select(f => "run logs: " + f))
            .ToList();
        Assert.Empty(missing);
    }
}
