using Campaign.Core.Lifecycle;
using Campaign.Core.Tracking;
using Campaign.Store;

namespace Campaign.App.Runs;

/// <summary>One job leg as status shows it.</summary>
/// <param name="Number">Its number in the run's chain.</param>
/// <param name="JobId">The batch system's id.</param>
/// <param name="State">"intent", or the normalised job state.</param>
/// <param name="NativeState">The batch system's own state.</param>
/// <param name="ExitCode">Exit code, when ended.</param>
/// <param name="Signal">Signal, when ended by one.</param>
/// <param name="ElapsedSeconds">Wall time used.</param>
/// <param name="ChargedCoreHours">Charge.</param>
/// <param name="RestartFrom">Checkpoint it restarted from.</param>
public sealed record LegView(long Number, string? JobId, string State, string NativeState, int? ExitCode, int? Signal, double? ElapsedSeconds, double? ChargedCoreHours, string? RestartFrom);

/// <summary>One tracked run as status shows it.</summary>
/// <param name="Run">The run.</param>
/// <param name="RateMPerHour">Simulated M per wall hour so far.</param>
/// <param name="PredictedFinish">When it reaches its target at that rate.</param>
/// <param name="ChargedCoreHours">Charged so far.</param>
/// <param name="Legs">Its legs.</param>
public sealed record RunView(RunRecord Run, double? RateMPerHour, DateTimeOffset? PredictedFinish, double ChargedCoreHours, IReadOnlyList<LegView> Legs);

/// <summary>How the plan stands, in counts.</summary>
/// <param name="PlanId">The current plan.</param>
/// <param name="ToCome">Plan runs not tracked yet.</param>
/// <param name="Active">Tracked and being worked on.</param>
/// <param name="Held">Held for a human.</param>
/// <param name="Finished">Finished.</param>
/// <param name="Abandoned">Given up.</param>
/// <param name="Rehearsals">Rehearsal runs (not plan runs).</param>
public sealed record PlanSummary(long PlanId, int ToCome, int Active, int Held, int Finished, int Abandoned, int Rehearsals);

/// <summary>The whole status.</summary>
/// <param name="Runs">Every tracked run.</param>
/// <param name="Plan">The plan's standing, when there is a plan.</param>
/// <param name="ClusterFaults">Clusters whose batch system failed in the latest cycles.</param>
/// <param name="LastCycle">When the last reconcile cycle ran (what the states are as of), or null.</param>
/// <param name="Events">Recent run events, newest last.</param>
/// <param name="BatchSystems">Each cluster's batch system ("slurm", "pbs", "local"): whose words a native state is.</param>
/// <param name="Sites">Every cluster with its site, login host (remote clusters), when it last answered and its current error.</param>
public sealed record StatusResult(IReadOnlyList<RunView> Runs, PlanSummary? Plan, IReadOnlyList<ClusterFault> ClusterFaults, DateTimeOffset? LastCycle, IReadOnlyList<RunEvent> Events, IReadOnlyDictionary<string, string> BatchSystems, IReadOnlyList<SiteView> Sites);

/// <summary>Where a cluster is and how the tracker last fared reaching it.</summary>
public sealed record SiteView(string Cluster, string Site, string? LoginHost, DateTimeOffset? LastReached, string? LastError);

/// <summary>The campaign's status: runs, plan standing, clusters at fault, and how fresh it is.</summary>
public sealed class StatusService
{
    private readonly TimeProvider _time;

    /// <summary>Creates the service.</summary>
    public StatusService(TimeProvider time) => _time = time;

    /// <summary>Reads the status with the last <paramref name="events"/> run events.</summary>
    public StatusResult Status(string workspaceRoot, int events)
    {
        using var workspace = Workspace.Open(workspaceRoot, _time);
        var snapshot = CampaignSnapshot.Load(workspace);
        var legs = TrackingStore.Legs(workspace.Connection).GroupBy(s => s.RunId).ToDictionary(g => g.Key, g => g.OrderBy(s => s.Number).ToList(), StringComparer.Ordinal);
        var now = _time.GetUtcNow();
        var views = snapshot.Runs.Select(r =>
        {
            var mine = legs.GetValueOrDefault(r.RunId) ?? new List<JobLeg>();
            var elapsedHours = mine.Sum(s => s.Elapsed?.TotalHours ?? 0);
            double? rate = elapsedHours > 0 ? r.Progress / elapsedHours : null;
            DateTimeOffset? finish = rate is > 0 && r.State.IsActive() ? now + TimeSpan.FromHours((r.TargetLength - r.Progress) / rate.Value) : null;
            var list = mine.Select(s => new LegView(s.Number, s.JobId, s.Phase == LegPhase.Intent ? "intent" : s.JobState, s.NativeState, s.ExitCode, s.Signal, s.Elapsed?.TotalSeconds, s.Charged, s.RestartFrom)).ToList();
            return new RunView(r, rate, finish, mine.Sum(s => s.Charged ?? 0), list);
        }).ToList();
        PlanSummary? plan = null;
        if (snapshot.Plan is { } p)
        {
            var standing = snapshot.Standing.Runs;
            int Count(PlanRunStatus status) => standing.Count(s => s.Status == status);
            plan = new PlanSummary(p.Id, Count(PlanRunStatus.ToCome), Count(PlanRunStatus.Active), Count(PlanRunStatus.Held), Count(PlanRunStatus.Finished), Count(PlanRunStatus.Abandoned), snapshot.Standing.Rehearsals.Count);
        }

        var recent = events > 0 ? TrackingStore.Events(workspace.Connection).TakeLast(events).ToList() : new List<RunEvent>();
        var batchSystems = workspace.Clusters.ToDictionary(c => c.Key, c => c.Value.BatchSystem.ToString().ToLowerInvariant(), StringComparer.Ordinal);
        var faults = ClusterFaultStore.All(workspace.Connection);
        var reached = ClusterFaultStore.Reached(workspace.Connection);
        var sites = workspace.Clusters.Values.OrderBy(c => c.Name, StringComparer.Ordinal)
            .Select(c => new SiteView(c.Name, c.Site, c.Remote?.Host, reached.TryGetValue(c.Name, out var at) ? at : null, faults.FirstOrDefault(f => f.Cluster == c.Name)?.Message))
            .ToList();
        return new StatusResult(views, plan, faults, ClusterFaultStore.LastCycle(workspace.Connection), recent, batchSystems, sites);
    }
}
