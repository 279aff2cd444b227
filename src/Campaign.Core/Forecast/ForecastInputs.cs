using Campaign.Core.Domain;

namespace Campaign.Core.Forecast;

/// <summary>One run to forecast (a configuration at one level), as far as it still has to go.</summary>
/// <param name="Id">Run id.</param>
/// <param name="Cluster">Cluster it runs on.</param>
/// <param name="Cores">Cores per job.</param>
/// <param name="FeatureRow">The cost model's feature row, or null when its cost is given.</param>
/// <param name="LogOffset">Added to x'b: minus ln(cluster speed).</param>
/// <param name="GivenCoreHours">Its consumed core-hours when no model applies.</param>
/// <param name="DoneFraction">Fraction of its simulated length already done (0 for a planned run).</param>
/// <param name="Active">True when a leg of it is queued or running now (its first leg needs no new submission wait).</param>
public sealed record ForecastRun(string Id, string Cluster, int Cores, double[]? FeatureRow, double LogOffset, double? GivenCoreHours, double DoneFraction, bool Active);

/// <summary>A cluster as the forecast sees it: its queue and its allocation.</summary>
/// <param name="Profile">The cluster profile (wall limit, queue limits, queue waits, charge policy).</param>
/// <param name="Allocation">Its allocation (with windows), or null when it has none.</param>
/// <param name="AlreadyCharged">Core-hours already charged in the allocation before the forecast starts.</param>
/// <param name="MeasuredWaitsHours">Queue waits the campaign has measured on this cluster; with at least
/// <see cref="ForecastCluster.MinimumMeasuredWaits"/> of them their median and 90th percentile replace the profile's.</param>
public sealed record ForecastCluster(ClusterProfile Profile, Allocation? Allocation, double AlreadyCharged, IReadOnlyList<double>? MeasuredWaitsHours = null)
{
    /// <summary>Measured waits needed before they replace the profile's stated distribution.</summary>
    public const int MinimumMeasuredWaits = 5;

    /// <summary>The median and 90th percentile of the queue wait in use, and where they come from.</summary>
    public (double Median, double P90, string Source) QueueWait()
    {
        if (MeasuredWaitsHours is { Count: >= MinimumMeasuredWaits } waits)
        {
            var sorted = waits.Order().ToArray();
            double At(double p) => sorted[(int)Math.Min(sorted.Length - 1, Math.Floor(p * sorted.Length))];
            return (At(0.5), Math.Max(At(0.9), At(0.5)), $"{sorted.Length} measured waits");
        }

        return (Profile.QueueWaitMedianHours, Profile.QueueWaitP90Hours, "the profile");
    }
}

/// <summary>Settings of the forecast.</summary>
public sealed record ForecastOptions
{
    /// <summary>Monte Carlo replicas.</summary>
    public int Replicas { get; init; } = 2000;

    /// <summary>Seed.</summary>
    public int Seed { get; init; } = 1;

    /// <summary>Probability that a leg fails and loses its work since the last checkpoint.</summary>
    public double LegFailureProbability { get; init; } = 0.05;

    /// <summary>Hours of each leg kept for writing the checkpoint.</summary>
    public double CheckpointMarginHours { get; init; } = 0.5;
}
