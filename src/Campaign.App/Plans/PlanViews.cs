using Campaign.Core.Domain;
using Campaign.Core.Lifecycle;
using Campaign.Store;

namespace Campaign.App.Plans;

/// <summary>One row of a saved plan as shown: the row and, for the current plan, where it stands.</summary>
/// <param name="Entry">The plan row (configuration, resolution or trials, cluster, the estimate it was chosen on).</param>
/// <param name="Status">"to come", "active", "held", "finished", "given up" for the current plan; "" for an older version.</param>
public sealed record PlanRowView(PlanEntry Entry, string Status);

/// <summary>A saved plan version with its rows, and the numbers of every version.</summary>
/// <param name="Plan">The version.</param>
/// <param name="Rows">Its rows, by configuration, kind and resolution.</param>
/// <param name="Versions">Every version's number and when it was saved.</param>
/// <param name="IsCurrent">True for the newest version (whose rows have a status).</param>
public sealed record PlanView(PlanVersion Plan, IReadOnlyList<PlanRowView> Rows, IReadOnlyList<(long Id, DateTimeOffset CreatedAt)> Versions, bool IsCurrent);

/// <summary>Reading saved plans: one version, and two compared.</summary>
public sealed class PlanViews
{
    private readonly TimeProvider _time;

    /// <summary>Creates the service.</summary>
    public PlanViews(TimeProvider time) => _time = time;

    /// <summary>Plan version <paramref name="version"/> (default the current one).</summary>
    public PlanView Show(string workspaceRoot, long? version)
    {
        using var workspace = Workspace.Open(workspaceRoot, _time);
        var versions = PlanStore.Versions(workspace.Connection);
        var plan = Find(workspace, versions, version, "--version");
        var current = plan.Id == versions[^1].Id;
        var status = current
            ? CampaignSnapshot.Load(workspace).Standing.Runs.ToDictionary(s => (s.Entry.ConfigId, s.Entry.Level, s.Entry.Kind), s => Words(s.Status))
            : new Dictionary<(string, int, PlanEntryKind), string>();
        var rows = plan.Entries
            .OrderBy(e => e.ConfigId, StringComparer.Ordinal).ThenBy(e => e.Kind).ThenBy(e => e.Level)
            .Select(e => new PlanRowView(e, e.Kind == PlanEntryKind.Trials ? (current ? "-" : "") : status.GetValueOrDefault((e.ConfigId, e.Level, e.Kind), "")))
            .ToList();
        return new PlanView(plan, rows, versions, current);
    }

    /// <summary>
    /// Compares plan version <paramref name="older"/> with <paramref name="newer"/>; by default the current version
    /// with the one before it.
    /// </summary>
    public PlanComparison Compare(string workspaceRoot, long? older, long? newer)
    {
        using var workspace = Workspace.Open(workspaceRoot, _time);
        var versions = PlanStore.Versions(workspace.Connection);
        var after = Find(workspace, versions, newer, "the newer version");
        if (older is null && versions.All(v => v.Id >= after.Id))
        {
            throw new InvalidInputException(new[] { $"plan {after.Id} is the first version: expected two saved plans to compare (a re-plan with 'campaign select FILE --save' makes the next)" });
        }

        var before = Find(workspace, versions, older ?? versions.Last(v => v.Id < after.Id).Id, "the older version");
        return PlanComparison.Between(before, after);
    }

    private static PlanVersion Find(Workspace workspace, IReadOnlyList<(long Id, DateTimeOffset CreatedAt)> versions, long? version, string what)
    {
        if (versions.Count == 0)
        {
            throw new InvalidInputException(new[] { $"{workspace.Root}: no saved plan: expected one made by 'campaign select FILE --save'" });
        }

        var id = version ?? versions[^1].Id;
        return (versions.Any(v => v.Id == id) ? PlanStore.Version(workspace.Connection, id) : null)
            ?? throw new InvalidInputException(new[] { $"{what} = {id}: expected a saved plan version, one of {string.Join(", ", versions.Select(v => v.Id))}" });
    }

    private static string Words(PlanRunStatus status) => status switch
    {
        PlanRunStatus.ToCome => "to come",
        PlanRunStatus.Abandoned => "given up",
        _ => status.ToString().ToLowerInvariant(),
    };
}
