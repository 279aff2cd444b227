using Campaign.Batch.Local;

namespace Campaign.Batch.Tests.Support;

/// <summary>A local runner whose supervisor is this test assembly, run by the dotnet host.</summary>
public static class LocalRunner
{
    public static SupervisorCommand Supervisor
    {
        get
        {
            var host = Environment.GetEnvironmentVariable("DOTNET_HOST_PATH") is { Length: > 0 } h ? h : "dotnet";
            return new SupervisorCommand(host, new[] { typeof(Program).Assembly.Location, LocalSupervisor.Command });
        }
    }

    public static LocalBatchSystem Create(string root, int cores = 4, double graceSeconds = 1) =>
        new(new LocalOptions(root, cores, Supervisor, TimeSpan.FromSeconds(graceSeconds)));
}
