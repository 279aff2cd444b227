using System.Globalization;
using System.Text.Json;
using Campaign.Core.Lifecycle;
using Campaign.Core.Domain;
using Campaign.Core.Physics;
using Campaign.Core.Tracking;
using Campaign.Store;

namespace Campaign.App.Runs;

/// <summary>Start tracking runs of the current plan.</summary>
/// <param name="Workspace">Workspace folder.</param>
/// <param name="Cluster">Run them on this cluster instead of the plan's (for example a workstation).</param>
/// <param name="Cores">Cores per job instead of the plan's.</param>
/// <param name="Only">Only these configuration ids (each must be in the plan).</param>
/// <param name="Rehearsal">A rehearsal: its own runs, which never make a plan run done and never feed the run logs.</param>
public sealed record TrackRequest(string Workspace, string? Cluster, int? Cores, IReadOnlyCollection<string>? Only, bool Rehearsal);

/// <summary>What tracking added.</summary>
/// <param name="PlanId">The plan the runs come from.</param>
/// <param name="Added">Runs added.</param>
/// <param name="AlreadyTracked">Plan runs asked for that were already tracked (not added again).</param>
/// <param name="Folders">The run folder of each added run (absolute).</param>
public sealed record TrackResult(long PlanId, IReadOnlyList<RunRecord> Added, IReadOnlyList<string> AlreadyTracked, IReadOnlyDictionary<string, string> Folders);

/// <summary>Adopting the plan: one tracked run per configuration and level, with a run folder the simulation script reads.</summary>
public sealed class TrackService
{
    private readonly TimeProvider _time;

    /// <summary>Creates the service.</summary>
    public TrackService(TimeProvider time) => _time = time;

    /// <summary>
    /// Adds every plan run asked for that is not tracked yet, in one transaction, each with its folder and a
    /// run.json describing it (physics, level, target length). A rehearsal gets its own ids (".r1", ".r2" ...).
    /// </summary>
    public TrackResult Track(TrackRequest request)
    {
        using var workspace = Workspace.Open(request.Workspace, _time);
        var problems = new List<string>();
        if (request.Cluster is { } on && !workspace.Clusters.ContainsKey(on))
        {
            problems.Add($"--on {on}: expected a cluster with a profile: {string.Join(", ", workspace.Clusters.Keys)}");
        }

        if (request.Cores is < 1)
        {
            problems.Add($"--cores = {request.Cores.Value.ToString(CultureInfo.InvariantCulture)}: expected at least 1");
        }

        var snapshot = CampaignSnapshot.Load(workspace);
        var plan = snapshot.Plan ?? throw new InvalidInputException(new[] { $"{workspace.Root}: no plan yet: expected 'campaign select FILE --save' first" });
        var configs = plan.ConfigIds;
        foreach (var id in request.Only?.Where(id => !configs.Contains(id, StringComparer.Ordinal)) ?? Enumerable.Empty<string>())
        {
            var shown = configs.Take(8).ToList();
            problems.Add($"--only {id}: not a configuration of plan {plan.Id.ToString(CultureInfo.InvariantCulture)}: expected one of {string.Join(", ", shown)}{(configs.Count > shown.Count ? $" ... ({configs.Count.ToString(CultureInfo.InvariantCulture)} in all)" : "")}");
        }

        if (problems.Count > 0)
        {
            throw new InvalidInputException(problems);
        }

        // A run id that an imported run log already has would make the finished run's log collide with it.
        var wanted = plan.Runs.Where(e => request.Only is null || request.Only.Contains(e.ConfigId)).Select(e => e.RunId).ToList();
        var imported = RunLogStore.Sources(workspace.Connection, request.Rehearsal ? Array.Empty<string>() : wanted).Where(s => s.Value != RunLogStore.TrackingSource).ToList();
        if (imported.Count > 0)
        {
            throw new InvalidInputException(imported.Select(s => $"{s.Key}: a run log imported from {s.Value} has this id: expected run ids that are new; rename the configuration in the candidate file (and re-plan), or the imported log's run_id (and import it again with --replace)").ToList());
        }

        var existing = TrackingStore.Runs(workspace.Connection);
        var known = existing.Select(r => r.RunId).ToHashSet(StringComparer.Ordinal);
        var position = existing.Count == 0 ? 0 : existing.Max(r => r.Position) + 1;
        var settings = workspace.Config.Tracking;
        var added = new List<TrackedRun>();
        var already = new List<string>();
        var at = _time.GetUtcNow();
        using var tx = workspace.Connection.BeginTransaction();
        foreach (var entry in plan.Runs.Where(e => request.Only is null || request.Only.Contains(e.ConfigId)))
        {
            var id = request.Rehearsal ? NextRehearsalId(entry, known) : entry.RunId;
            if (known.Contains(id))
            {
                already.Add(id);
                continue;
            }

            known.Add(id);
            var target = entry.TargetLength ?? SimulatedLength.Estimate(entry.Configuration, workspace.Config.Length).Total;
            var (run, adopted) = TrackedRun.Adopt(id, entry.ConfigId, entry.Level, request.Cluster ?? entry.Cluster, request.Cores ?? entry.Cores, Path.Combine(settings.RunsFolder, id), target, entry.Configuration, position++, request.Rehearsal, at);
            WriteRunFolder(workspace, run);
            TrackingStore.Add(workspace.Connection, tx, run, adopted);
            added.Add(run);
        }

        tx.Commit();
        return new TrackResult(plan.Id, added.Select(r => r.ToRecord()).ToList(), already, added.ToDictionary(r => r.RunId, r => Path.Combine(workspace.Root, r.Folder), StringComparer.Ordinal));
    }

    private static string NextRehearsalId(PlanEntry entry, IReadOnlySet<string> known)
    {
        var n = 1;
        while (known.Contains(RunIds.Rehearsal(entry.ConfigId, entry.Level, n)))
        {
            n++;
        }

        return RunIds.Rehearsal(entry.ConfigId, entry.Level, n);
    }

    private static void WriteRunFolder(Workspace workspace, TrackedRun run)
    {
        var full = Path.Combine(workspace.Root, run.Folder);
        Directory.CreateDirectory(full);
        var c = run.Configuration;
        File.WriteAllText(Path.Combine(full, "run.json"), JsonSerializer.Serialize(new
        {
            run_id = run.RunId,
            config_id = run.ConfigId,
            level = run.Level,
            rehearsal = run.Rehearsal,
            q = c.Q.Value,
            chi1 = new[] { c.Chi1.X, c.Chi1.Y, c.Chi1.Z },
            chi2 = new[] { c.Chi2.X, c.Chi2.Y, c.Chi2.Z },
            omega0 = c.Omega0,
            target_length = run.TargetLength,
            end_of_inspiral_x = workspace.Config.Length.EndOfInspiralX,
            cluster = run.Cluster,
            cores = run.Cores,
        }, new JsonSerializerOptions { WriteIndented = true }));
    }
}
