namespace Campaign.Core.Domain;

/// <summary>Which batch system a cluster runs.</summary>
public enum BatchSystemKind
{
    /// <summary>Plain processes on a workstation, run by Campaign itself.</summary>
    Local,

    /// <summary>Slurm (sbatch, squeue, sacct, scancel).</summary>
    Slurm,

    /// <summary>The PBS family (qsub, qstat, qdel).</summary>
    Pbs,
}
