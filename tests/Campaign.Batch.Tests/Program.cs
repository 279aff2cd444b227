using Campaign.Batch.Local;

namespace Campaign.Batch.Tests;

/// <summary>
/// Entry point of the test assembly: with the supervisor arguments it acts as the local runner's supervisor
/// (as the campaign command does), so the local-runner tests run real detached processes.
/// </summary>
public static class Program
{
    public static int Main(string[] args) => args is [LocalSupervisor.Command, var folder] ? LocalSupervisor.Run(folder) : 0;
}
