using Campaign.Core.Domain;
using Campaign.Core.Physics;

namespace Campaign.Core.CostModel;

/// <summary>
/// The physical features of one run (logged or planned) that the cost model uses:
/// ln(T/M), ln q, the spin term -ln(1 - chi*) with chi* = max(|chi1|, |chi2|) (capped at 0.999), which
/// grows without bound as a spin nears 1, the resolution level, ln cores, the cluster and its profile speed.
/// </summary>
public sealed record CostObservation(string Id, double LogLength, double LogQ, double SpinTerm, double Level, double LogCores, string Cluster, double LogSpeed)
{
    /// <summary>Largest spin magnitude used in the spin term (keeps it finite at |chi| = 1).</summary>
    public const double SpinCap = 0.999;

    /// <summary>The spin term -ln(1 - min(max(|chi1|, |chi2|), 0.999)).</summary>
    public static double Spin(BinaryConfiguration c) => Math.Max(0.0, -Math.Log(1 - Math.Min(Math.Max(c.Chi1.Magnitude, c.Chi2.Magnitude), SpinCap)));

    /// <summary>Features of a planned run of simulated length <paramref name="length"/> (M).</summary>
    public static CostObservation For(string id, BinaryConfiguration c, int level, int cores, ClusterProfile cluster, double length) =>
        new(id, Math.Log(length), Math.Log(c.Q.Value), Spin(c), level, Math.Log(cores), cluster.Name, Math.Log(cluster.RelativeSpeed));

    /// <summary>
    /// Features of a logged run: its length is t_end when logged, else (for completed runs) the simulated-length
    /// estimate. Failed runs, and partial runs without t_end, have no usable length and give null.
    /// </summary>
    public static CostObservation? FromLog(RunLog log, ClusterProfile cluster, LengthSettings settings)
    {
        double? length = log.TEnd ?? (log.Outcome == RunOutcome.Completed ? SimulatedLength.Estimate(log.Configuration, settings).Total : null);
        if (log.Outcome == RunOutcome.Failed || length is null)
        {
            return null;
        }

        return For(log.RunId, log.Configuration, log.Level, log.Cores, cluster, length.Value);
    }
}
