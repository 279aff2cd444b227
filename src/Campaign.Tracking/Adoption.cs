using System.Globalization;
using System.Text.Json;
using Campaign.Core.Domain;
using Campaign.Core.Physics;
using Campaign.Store;

namespace Campaign.Tracking;

/// <summary>Turns the runs of the current plan into tracked runs (one per configuration and level).</summary>
public static class Adoption
{
    /// <summary>The id of a tracked run: configuration id and level.</summary>
    public static string RunId(string configId, int level) => configId + ".L" + level.ToString(CultureInfo.InvariantCulture);

    /// <summary>
    /// Adds every run of <paramref name="plan"/> not tracked yet, in one transaction, creating its folder with a
    /// run.json that describes it (physics, level, target length) for the simulation script. <paramref name="machine"/>
    /// and <paramref name="cores"/> override the plan's assignment (for example to run a scaled-down plan on a
    /// workstation); <paramref name="rehearsal"/> marks the runs as a rehearsal whose costs stay out of the run
/// logs. Returns the runs added.
    /// </summary>
    public static IReadOnlyList<TrackedRun> AddFromPlan(Workspace workspace, Plan plan, string? machine, int? cores, IReadOnlySet<string>? only, TimeProvider time, bool rehearsal = false)
    {
        if (machine is not null && !workspace.Machines.ContainsKey(machine))
        {
            throw new InvalidInputException(new[] { $"--on {machine}: expected a machine with a profile: {string.Join(", ", workspace.Machines.Keys)}" });
        }

        var existing = TrackingStore.Runs(workspace.Connection);
        var known = existing.Select(r => r.RunId).ToHashSet(StringComparer.Ordinal);
        var position = existing.Count == 0 ? 0 : existing.Max(r => r.Position) + 1;
        var settings = workspace.Config.Tracking;
        var added = new List<TrackedRun>();
        var at = time.GetUtcNow().ToString("O", CultureInfo.InvariantCulture);
        using var tx = workspace.Connection.BeginTransaction();
        foreach (var planned in plan.Runs.Where(r => only is null || only.Contains(r.ConfigId)))
        {
            var target = SimulatedLength.Estimate(planned.Configuration, workspace.Config.Length).Total;
            foreach (var level in planned.Levels)
            {
                var id = RunId(planned.ConfigId, level);
                if (known.Contains(id))
                {
                    continue;
                }

                var folder = Path.Combine(settings.RunsFolder, id);
                var c = planned.Configuration;
                var run = new TrackedRun
                {
                    RunId = id,
                    ConfigId = planned.ConfigId,
                    Level = level,
                    Machine = machine ?? planned.Machine,
                    Cores = cores ?? planned.Cores,
                    Folder = folder,
                    TargetLength = target,
                    Position = position++,
                    State = "planned",
                    Rehearsal = rehearsal,
                };
                run.SetConfiguration(c);
                var full = Path.Combine(workspace.Root, folder);
                Directory.CreateDirectory(full);
                File.WriteAllText(Path.Combine(full, "run.json"), JsonSerializer.Serialize(new
                {
                    run_id = id,
                    config_id = planned.ConfigId,
                    level,
                    q = c.Q.Value,
                    chi1 = new[] { c.Chi1.X, c.Chi1.Y, c.Chi1.Z },
                    chi2 = new[] { c.Chi2.X, c.Chi2.Y, c.Chi2.Z },
                    omega0 = c.Omega0,
                    target_length = target,
                    end_of_inspiral_x = workspace.Config.Length.EndOfInspiralX,
                    machine = run.Machine,
                    cores = run.Cores,
                }, new JsonSerializerOptions { WriteIndented = true }));
                TrackingStore.Add(workspace.Connection, tx, run, at);
                added.Add(run);
            }
        }

        tx.Commit();
        return added;
    }
}
