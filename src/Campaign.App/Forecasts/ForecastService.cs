using System.Globalization;
using Campaign.Core.Lifecycle;
using Campaign.Core.CostModel;
using Campaign.Core.Domain;
using Campaign.Core.Forecast;
using Campaign.Core.Physics;
using Campaign.Core.Tracking;
using Campaign.Store;

namespace Campaign.App.Forecasts;

/// <summary>A forecast to run.</summary>
/// <param name="Workspace">Workspace folder.</param>
/// <param name="Replicas">Monte Carlo replicas.</param>
/// <param name="Seed">Seed.</param>
public sealed record ForecastRequest(string Workspace, int Replicas, int Seed);

/// <summary>A forecast and what it covered.</summary>
/// <param name="Result">Finish dates, window charges and the chance the plan fits.</param>
/// <param name="Source">What was simulated, in words.</param>
/// <param name="RunsLeft">Runs simulated: the plan runs still to do.</param>
/// <param name="FailureProbability">Leg failure probability used.</param>
/// <param name="FailureBasis">Where it came from.</param>
public sealed record ForecastOutcome(ForecastResult Result, string Source, int RunsLeft, double FailureProbability, string FailureBasis);

/// <summary>
/// The forecast of the rest of the campaign: every plan run still to do, tracked ones from their progress and
/// untracked ones from their stored estimates; what was spent comes from the same ledger the cycle's budget rule uses.
/// </summary>
public sealed class ForecastService
{
    private readonly TimeProvider _time;

    /// <summary>Creates the service.</summary>
    public ForecastService(TimeProvider time) => _time = time;

    /// <summary>Runs the forecast.</summary>
    public ForecastOutcome Forecast(ForecastRequest request, IProgress<double>? progress = null)
    {
        if (request.Replicas is < 10 or > 1_000_000)
        {
            throw new InvalidInputException(new[] { $"--replicas = {request.Replicas.ToString(CultureInfo.InvariantCulture)}: expected an integer from 10 to 1000000" });
        }

        using var workspace = Workspace.Open(request.Workspace, _time);
        return Run(workspace, CampaignSnapshot.Load(workspace), RunLogStore.All(workspace.Connection), CostModelStore.Latest(workspace.Connection)?.Model, request.Replicas, request.Seed, progress);
    }

    /// <summary>The forecast of an open workspace (shared with the report).</summary>
    internal ForecastOutcome Run(Workspace workspace, CampaignSnapshot snapshot, IReadOnlyList<RunLog> logs, FittedCostModel? model, int replicas, int seed, IProgress<double>? progress = null)
    {
        var (runs, source) = Runs(workspace, snapshot, model);
        var now = _time.GetUtcNow();
        var failure = FailureProbability(logs);
        var clusters = Clusters(workspace, snapshot, now);
        var result = CampaignForecaster.Run(runs, clusters, model, now, new ForecastOptions { Replicas = replicas, Seed = seed, LegFailureProbability = failure.Probability }, progress);
        return new ForecastOutcome(result, source, runs.Count, failure.Probability, failure.Basis);
    }

    /// <summary>The runs still to do: every plan run left (tracked from its progress, untracked from its estimate).</summary>
    internal static (IReadOnlyList<ForecastRun> Runs, string Source) Runs(Workspace workspace, CampaignSnapshot snapshot, FittedCostModel? model)
    {
        if (snapshot.Plan is null && snapshot.Runs.All(r => r.Rehearsal))
        {
            throw new InvalidInputException(new[] { $"{workspace.Root}: nothing to forecast: expected a plan ('campaign select FILE --save') or tracked runs" });
        }

        ForecastRun Make(string id, string cluster, int cores, BinaryConfiguration c, int level, double length, double done, bool active, double? consumed)
        {
            var profile = workspace.Cluster(cluster);
            if (model is not null)
            {
                var observation = CostObservation.For(id, c, level, cores, profile, length);
                return new ForecastRun(id, cluster, cores, model.Features.Row(observation), -Math.Log(profile.RelativeSpeed), null, done, active);
            }

            return new ForecastRun(id, cluster, cores, null, 0, consumed ?? throw new InvalidInputException(new[] { $"{id}: no cost model and no planned cost: expected 'campaign model fit'" }), done, active);
        }

        double LengthOf(PlanEntry e) => e.TargetLength ?? SimulatedLength.Estimate(e.Configuration, workspace.Config.Length).Total;
        var list = new List<ForecastRun>();
        foreach (var s in snapshot.Standing.Left)
        {
            var e = s.Entry;
            list.Add(s.Run is { } r
                ? Make(r.RunId, r.Cluster, r.Cores, r.Configuration, r.Level, r.TargetLength, r.DoneFraction, r.State is RunState.Queued or RunState.Running, e.Estimate.Median * profileRatio(e.Cluster, r.Cluster))
                : Make(e.RunId, e.Cluster, e.Cores, e.Configuration, e.Level, LengthOf(e), 0, false, e.Estimate.Median));
        }

        foreach (var r in snapshot.Standing.OutsidePlan.Where(r => r.State.IsActive() || r.State == RunState.Held))
        {
            list.Add(Make(r.RunId, r.Cluster, r.Cores, r.Configuration, r.Level, r.TargetLength, r.DoneFraction, r.State is RunState.Queued or RunState.Running, null));
        }

        var tracked = list.Count(f => snapshot.Runs.Any(r => r.RunId == f.Id));
        var finished = snapshot.Standing.Runs.Count(s => s.Status == PlanRunStatus.Finished);
        var rehearsals = snapshot.Standing.Rehearsals.Count;
        var source = snapshot.Plan is null
            ? $"{list.Count} tracked runs (no plan)"
            : $"plan {snapshot.Plan.Id.ToString(CultureInfo.InvariantCulture)}: {list.Count} runs left ({tracked} tracked, {list.Count - tracked} to come; {finished} finished{(rehearsals > 0 ? $"; {rehearsals} rehearsal runs not counted" : "")})";
        return (list, source);

        double profileRatio(string planned, string actual) => workspace.Cluster(planned).RelativeSpeed / workspace.Cluster(actual).RelativeSpeed;
    }

    /// <summary>Share of logged legs that failed: failed and partial runs over all legs logged (0.05 without logs).</summary>
    internal static (double Probability, string Basis) FailureProbability(IReadOnlyList<RunLog> logs)
    {
        if (logs.Count == 0)
        {
            return (0.05, "no run logs: 5% assumed (common practice, order of magnitude)");
        }

        var legs = logs.Sum(l => l.Legs ?? 1);
        var failures = logs.Count(l => l.Outcome != RunOutcome.Completed);
        var p = Math.Clamp((double)failures / legs, 0, 0.5);
        return (p, $"{failures} failed or partial runs over {legs} logged legs");
    }

    /// <summary>Each cluster's queue and its allocation (in force or next), with what the ledger says was spent in it.</summary>
    internal static IReadOnlyDictionary<string, ForecastCluster> Clusters(Workspace workspace, CampaignSnapshot snapshot, DateTimeOffset now)
    {
        var today = DateOnly.FromDateTime(now.UtcDateTime);
        var result = new Dictionary<string, ForecastCluster>(StringComparer.Ordinal);
        foreach (var profile in workspace.Clusters.Values)
        {
            var allocation = snapshot.Ledger.CurrentOrNext(profile.Name, today);
            var already = allocation is null ? 0 : snapshot.Ledger.SpentIn(allocation);
            var waits = snapshot.Legs
                .Where(s => s.Cluster == profile.Name && s.StartedAt is not null)
                .Select(s => (s.StartedAt!.Value - s.SubmittedAt).TotalHours)
                .Where(h => h >= 0)
                .ToList();
            result[profile.Name] = new ForecastCluster(profile, allocation, already, waits);
        }

        return result;
    }
}
