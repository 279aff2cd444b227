namespace Campaign.Batch.Slurm;

/// <summary>Settings of the Slurm adapter, all optional.</summary>
public sealed record SlurmOptions
{
    /// <summary>Partition to submit to (--partition), or null for the default.</summary>
    public string? Partition { get; init; }

    /// <summary>Account to charge (--account), or null.</summary>
    public string? Account { get; init; }

    /// <summary>Path of slurm.conf for the commands (SLURM_CONF), or null to use the system's.</summary>
    public string? ConfigFile { get; init; }

    /// <summary>The job-completion text file (jobcomp/filetxt), or null to ask `scontrol show config` for it.</summary>
    public string? JobCompletionFile { get; init; }

    /// <summary>Folder holding sbatch, squeue, scontrol, sacct and scancel, or null to use PATH.</summary>
    public string? CommandFolder { get; init; }
}
