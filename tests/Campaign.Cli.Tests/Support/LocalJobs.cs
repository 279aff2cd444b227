using System.Diagnostics;
using System.Globalization;
using System.Text.Json;

namespace Campaign.Cli.Tests.Support;

/// <summary>The local runner's jobs started from a test workspace.</summary>
public static class LocalJobs
{
    /// <summary>Leaves no job behind: kills every supervisor and payload started from the workspace.</summary>
    public static void KillAll(string workspace)
    {
        var runner = Path.Combine(workspace, "local-runner");
        foreach (var pidFile in Directory.Exists(runner) ? Directory.EnumerateFiles(runner, "*.pid", SearchOption.AllDirectories) : Enumerable.Empty<string>())
        {
            if (int.TryParse(File.ReadAllText(pidFile).Split(' ')[0], NumberStyles.None, CultureInfo.InvariantCulture, out var pid))
            {
                try
                {
                    Process.GetProcessById(pid).Kill(entireProcessTree: true);
                }
                catch (Exception e) when (e is ArgumentException or InvalidOperationException or System.ComponentModel.Win32Exception)
                {
                }
            }
        }
    }

    /// <summary>Every job the local runner ever received, by name (each must occur once).</summary>
    public static List<string> SubmittedNames(string workspace) =>
        Directory.Exists(Path.Combine(workspace, "local-runner"))
            ? Directory.EnumerateFiles(Path.Combine(workspace, "local-runner"), "request.json", SearchOption.AllDirectories)
                .Select(f => JsonDocument.Parse(File.ReadAllText(f)).RootElement.GetProperty("Name").GetString()!)
                .ToList()
            : new List<string>();
}
