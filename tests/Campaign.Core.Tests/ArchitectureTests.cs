using System.Text.RegularExpressions;

namespace Campaign.Core.Tests;

/// <summary>Core stays pure: no files, processes, clocks or console, and no outward project references.</summary>
public class ArchitectureTests
{
    private static readonly string[] Banned =
    {
        @"\bFile\.", @"\bDirectory\.", @"\bConsole\.", @"DateTime(Offset)?\.(Utc)?Now", @"\bProcess\.", @"\bEnvironment\.(?!NewLine)", @"TimeProvider\.System",
    };

    private static string CoreSource() => Path.Combine(RepositoryRoot.Path, "src", "Campaign.Core");

    [Fact]
    public void Core_source_uses_no_files_processes_console_or_wall_clock()
    {
        var offences = new List<string>();
        foreach (var file in Directory.EnumerateFiles(CoreSource(), "*.cs", SearchOption.AllDirectories).Where(f => !f.Contains("/obj/", StringComparison.Ordinal) && !f.Contains("/bin/", StringComparison.Ordinal)))
        {
            var lines = File.ReadAllLines(file);
            for (var i = 0; i < lines.Length; i++)
            {
                if (lines[i].TrimStart().StartsWith("///", StringComparison.Ordinal))
                {
                    continue;
                }

                offences.AddRange(Banned.Where(b => Regex.IsMatch(lines[i], b)).Select(b => $"{Path.GetFileName(file)}:{i + 1}: {lines[i].Trim()}"));
            }
        }

        Assert.Empty(offences);
    }

    [Fact]
    public void Core_references_no_storage_command_line_or_scheduling_assembly()
    {
        var references = typeof(Campaign.Core.Domain.MassRatio).Assembly.GetReferencedAssemblies().Select(a => a.Name).ToList();
        Assert.DoesNotContain(references, r => r is "Campaign.Store" or "Campaign.Cli" or "Microsoft.Data.Sqlite" or "Dapper" or "System.CommandLine" or "Quartz");
    }
}
