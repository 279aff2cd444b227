using Campaign.Batch;
using Campaign.Batch.Local;
using Campaign.Batch.Pbs;
using Campaign.Batch.Resilience;
using Campaign.Batch.Slurm;
using Campaign.Core.Domain;
using Campaign.Store;

namespace Campaign.Tracking;

/// <summary>One batch system per machine of the workspace, each wrapped in the host's retry/timeout decorator.</summary>
public static class BatchSystemFactory
{
    /// <summary>
    /// Builds the adapters: local machines get a local runner with its state in LOCAL-RUNNER/MACHINE under the
    /// workspace and as many slots as the machine's cores per node; Slurm and PBS machines use their commands.
    /// </summary>
    /// <param name="workspace">The workspace whose machines get adapters.</param>
    /// <param name="supervisor">How the local runner starts its job supervisors.</param>
    /// <param name="retry">The retry and timeout settings of the decorator.</param>
    /// <param name="time">The clock.</param>
    /// <param name="inside">Optional: wraps each adapter inside the decorator (fault injection in the reliability tests).</param>
    public static IReadOnlyDictionary<string, IBatchSystem> Create(Workspace workspace, SupervisorCommand supervisor, RetryOptions retry, TimeProvider time, Func<string, IBatchSystem, IBatchSystem>? inside = null) =>
        Create(workspace.Root, workspace.Machines, supervisor, retry, time, inside);

    /// <summary>Builds the adapters for the machines of the workspace in <paramref name="root"/>.</summary>
    /// <param name="root">The workspace folder (the local runner keeps its state under it).</param>
    /// <param name="machines">The machine profiles.</param>
    /// <param name="supervisor">How the local runner starts its job supervisors.</param>
    /// <param name="retry">The retry and timeout settings of the decorator.</param>
    /// <param name="time">The clock.</param>
    /// <param name="inside">Optional: wraps each adapter inside the decorator.</param>
    public static IReadOnlyDictionary<string, IBatchSystem> Create(string root, IReadOnlyDictionary<string, MachineProfile> machines, SupervisorCommand supervisor, RetryOptions retry, TimeProvider time, Func<string, IBatchSystem, IBatchSystem>? inside = null)
    {
        var systems = new Dictionary<string, IBatchSystem>(StringComparer.Ordinal);
        foreach (var machine in machines.Values)
        {
            IBatchSystem adapter = machine.BatchSystem switch
            {
                BatchSystemKind.Local => new LocalBatchSystem(new LocalOptions(Path.Combine(root, "local-runner", machine.Name), machine.CoresPerNode, supervisor)),
                BatchSystemKind.Slurm => new SlurmBatchSystem(new SlurmOptions { Partition = machine.Partition, Account = machine.Account }),
                _ => new PbsBatchSystem(new PbsOptions { Queue = machine.Partition, Account = machine.Account }),
            };
            systems[machine.Name] = new ResilientBatchSystem(inside is null ? adapter : inside(machine.Name, adapter), retry, time);
        }

        return systems;
    }
}
