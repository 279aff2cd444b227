using System.Reflection;

namespace Campaign.App.Tests;

/// <summary>The layers hold: the command line reaches the campaign only through the application services.</summary>
public class ArchitectureTests
{
    private static readonly Assembly Cli = typeof(Campaign.Cli.CampaignApp).Assembly;

    [Fact]
    public void The_command_line_references_neither_SQLite_nor_the_store()
    {
        var references = Cli.GetReferencedAssemblies().Select(a => a.Name!).ToList();
        Assert.Contains("Campaign.App", references);
        Assert.DoesNotContain(references, r => r is "Campaign.Store" or "Microsoft.Data.Sqlite" or "Dapper" or "SQLitePCLRaw.core");
    }

    [Fact]
    public void The_command_line_source_runs_no_SQL_and_opens_no_transaction()
    {
        var source = Path.Combine(RepositoryRoot.Path, "src", "Campaign.Cli");
        var offences = Directory.EnumerateFiles(source, "*.cs", SearchOption.AllDirectories)
            .Where(f => !f.Contains("/obj/", StringComparison.Ordinal) && !f.Contains("/bin/", StringComparison.Ordinal))
            .SelectMany(f => File.ReadAllLines(f).Select((line, i) => (File: Path.GetFileName(f), Line: i + 1, Text: line)))
            .Where(l => l.Text.Contains("BeginTransaction", StringComparison.Ordinal) || l.Text.Contains("Connection", StringComparison.Ordinal)
                || System.Text.RegularExpressions.Regex.IsMatch(l.Text, @"""\s*(SELECT|INSERT|UPDATE|DELETE)\b"))
            .Select(l => $"{l.File}:{l.Line}: {l.Text.Trim()}")
            .ToList();
        Assert.Empty(offences);
    }

    [Fact]
    public void The_core_references_no_infrastructure()
    {
        var core = typeof(Campaign.Core.Lifecycle.CampaignLedger).Assembly.GetReferencedAssemblies().Select(a => a.Name!).ToList();
        Assert.All(core, r => Assert.True(r.StartsWith("System", StringComparison.Ordinal) || r is "netstandard" or "MathNet.Numerics", r));
    }

    [Fact]
    public void Every_command_class_only_parses_calls_and_prints()
    {
        // A command may use the application layer, the domain's values and its own output helpers; the use-case
        // namespaces below the application layer are out of its reach.
        var commands = Cli.GetTypes().Where(t => t.Namespace == "Campaign.Cli.Commands");
        var forbidden = new[] { "Campaign.Store", "Campaign.Core.CostModel.CostModelFitter", "Campaign.Core.Selection.Selector", "Campaign.Core.Forecast.CampaignForecaster", "Campaign.Tracking.Reconciler" };
        var offences = new List<string>();
        foreach (var type in commands)
        {
            foreach (var method in type.GetMethods(BindingFlags.Static | BindingFlags.Instance | BindingFlags.Public | BindingFlags.NonPublic | BindingFlags.DeclaredOnly))
            {
                var body = method.GetMethodBody();
                if (body is null)
                {
                    continue;
                }

                foreach (var called in CalledTypes(method))
                {
                    if (forbidden.Any(f => called.StartsWith(f, StringComparison.Ordinal)))
                    {
                        offences.Add($"{type.Name}.{method.Name} uses {called}");
                    }
                }
            }
        }

        Assert.Empty(offences);
    }

    /// <summary>The declaring types of the methods a method body calls (read from its IL: call, callvirt, newobj).</summary>
    private static IEnumerable<string> CalledTypes(MethodInfo method)
    {
        var il = method.GetMethodBody()!.GetILAsByteArray() ?? Array.Empty<byte>();
        for (var i = 0; i < il.Length; i++)
        {
            // call (0x28), callvirt (0x6F), newobj (0x73) take a 4-byte metadata token.
            if (il[i] is 0x28 or 0x6F or 0x73 && i + 4 < il.Length)
            {
                var token = BitConverter.ToInt32(il, i + 1);
                string? name = null;
                try
                {
                    name = method.Module.ResolveMethod(token, method.DeclaringType?.GetGenericArguments(), method.GetGenericArguments())?.DeclaringType?.FullName;
                }
                catch (ArgumentException)
                {
                }

                if (name is not null)
                {
                    yield return name;
                    i += 4;
                }
            }
        }
    }
}
