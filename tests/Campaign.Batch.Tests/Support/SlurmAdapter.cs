namespace Campaign.Batch.Tests.Support;

/// <summary>The Slurm adapter for the test cluster.</summary>
public static class SlurmAdapter
{
    public static Campaign.Batch.Slurm.SlurmBatchSystem Create() => new(new Campaign.Batch.Slurm.SlurmOptions { ConfigFile = SlurmCluster.ConfigFile });
}
