using Campaign.Batch.Local;

namespace Campaign.Cli.Commands;

/// <summary>How to start this campaign executable again (for the local runner's supervisor and the demo payload).</summary>
internal static class SelfCommand
{
    /// <summary>The executable and the argument before any campaign arguments (the dll when run by the dotnet host).</summary>
    public static (string File, string? Argument) Current()
    {
        var dll = typeof(CampaignApp).Assembly.Location;
        var apphost = Path.Combine(Path.GetDirectoryName(dll)!, "campaign");
        if (File.Exists(apphost))
        {
            return (apphost, null);
        }

        var host = Environment.GetEnvironmentVariable("DOTNET_HOST_PATH") is { Length: > 0 } h ? h : "dotnet";
        return (host, dll);
    }

    public static SupervisorCommand Supervisor()
    {
        var (file, argument) = Current();
        return new SupervisorCommand(file, argument is null ? new[] { LocalSupervisor.Command } : new[] { argument, LocalSupervisor.Command });
    }

    /// <summary>Environment for batch scripts: CAMPAIGN_EXE and CAMPAIGN_EXE_ARG.</summary>
    public static IReadOnlyDictionary<string, string> JobEnvironment()
    {
        var (file, argument) = Current();
        return new Dictionary<string, string> { ["CAMPAIGN_EXE"] = file, ["CAMPAIGN_EXE_ARG"] = argument ?? "" };
    }
}
