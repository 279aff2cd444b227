using Campaign.Core.Domain;
using Campaign.Core.Physics;

namespace Campaign.Core.CostModel;

/// <summary>The runs of the logs the cost model can learn from, with their features and consumed core-hours.</summary>
/// <param name="Observations">Features of each usable run.</param>
/// <param name="CoreHours">Consumed core-hours (wall hours x cores) of each usable run.</param>
/// <param name="Skipped">Runs left out: failed, or partial without t_end.</param>
/// <param name="Lengths">Every non-failed run with its simulated length, for the storage model.</param>
public sealed record TrainingSet(IReadOnlyList<CostObservation> Observations, IReadOnlyList<double> CoreHours, int Skipped, IReadOnlyList<(RunLog Log, double Length)> Lengths)
{
    /// <summary>Builds the set; a run on a cluster without a profile is an input error naming the run.</summary>
    public static TrainingSet From(IReadOnlyList<RunLog> logs, IReadOnlyDictionary<string, ClusterProfile> clusters, LengthSettings settings)
    {
        var unknown = logs.Where(l => !clusters.ContainsKey(l.Cluster)).ToList();
        if (unknown.Count > 0)
        {
            throw new InvalidInputException(unknown.Select(l => $"run {l.RunId}: cluster = {l.Cluster}: expected a cluster with a profile ({string.Join(", ", clusters.Keys)}); restore its profile in clusters/").ToList());
        }

        var observations = new List<CostObservation>();
        var costs = new List<double>();
        var lengths = new List<(RunLog, double)>();
        foreach (var log in logs)
        {
            var observation = CostObservation.FromLog(log, clusters[log.Cluster], settings);
            if (observation is null)
            {
                continue;
            }

            observations.Add(observation);
            costs.Add(log.ConsumedCoreHours);
            lengths.Add((log, Math.Exp(observation.LogLength)));
        }

        return new TrainingSet(observations, costs, logs.Count - observations.Count, lengths);
    }
}
