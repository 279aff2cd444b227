namespace Campaign.Batch.Pbs;

/// <summary>Settings of the PBS adapter, all optional.</summary>
public sealed record PbsOptions
{
    /// <summary>Queue to submit to (-q), or null for the default.</summary>
    public string? Queue { get; init; }

    /// <summary>Account/project to charge (-A), or null.</summary>
    public string? Account { get; init; }

    /// <summary>Folder holding qsub, qstat and qdel, or null to use PATH.</summary>
    public string? CommandFolder { get; init; }
}
