using System.Globalization;
using Campaign.Core.Domain;
using Campaign.Store;
using Dapper;

namespace Campaign.App.Workspaces;

/// <summary>What <see cref="WorkspaceAdmin.Check"/> found.</summary>
/// <param name="Root">The workspace folder.</param>
/// <param name="Config">Its validated settings.</param>
/// <param name="Clusters">Its cluster profiles.</param>
/// <param name="SchemaVersion">Database schema version.</param>
/// <param name="Integrity">SQLite's quick check ("ok").</param>
public sealed record WorkspaceCheck(string Root, WorkspaceConfig Config, IReadOnlyDictionary<string, ClusterProfile> Clusters, long SchemaVersion, string Integrity);

/// <summary>What a backup wrote.</summary>
/// <param name="Workspace">The workspace copied.</param>
/// <param name="Destination">The backup folder.</param>
/// <param name="Files">Files copied, relative to the folder.</param>
/// <param name="DatabaseBytes">Size of the database copy.</param>
/// <param name="Integrity">Integrity check of the copy ("ok").</param>
public sealed record BackupSummary(string Workspace, string Destination, IReadOnlyList<string> Files, long DatabaseBytes, string Integrity);

/// <summary>Creating, checking and backing up workspaces; reading their settings without opening the database.</summary>
public sealed class WorkspaceAdmin
{
    private readonly TimeProvider _time;

    /// <summary>Creates the service.</summary>
    public WorkspaceAdmin(TimeProvider time) => _time = time;

    /// <summary>True when <paramref name="root"/> holds a workspace.</summary>
    public static bool Exists(string root) => Workspace.Exists(root);

    /// <summary>The validated settings and profiles of a workspace (the database is not opened).</summary>
    public static (WorkspaceConfig Config, IReadOnlyDictionary<string, ClusterProfile> Clusters) Settings(string root) => Workspace.ReadSettings(root);

    /// <summary>Creates a workspace from a template; returns the files written.</summary>
    public IReadOnlyList<string> Create(string root, string configText, IReadOnlyDictionary<string, string> profiles, bool force, IReadOnlyDictionary<string, string>? examples = null) =>
        WorkspaceCreator.Create(root, new WorkspaceTemplate(configText, profiles, examples), force, _time);

    /// <summary>Validates config, profiles and database, and how they fit together.</summary>
    public WorkspaceCheck Check(string root)
    {
        var problems = StallProblems(root);
        if (problems.Count > 0)
        {
            throw new InvalidInputException(problems);
        }

        using var workspace = Workspace.Open(root, _time);
        var schema = workspace.Connection.ExecuteScalar<long>("PRAGMA user_version");
        var integrity = workspace.Connection.ExecuteScalar<string>("PRAGMA quick_check") ?? "";
        return new WorkspaceCheck(workspace.Root, workspace.Config, workspace.Clusters, schema, integrity);
    }

    /// <summary>
    /// A stall (no progress for stall_minutes while running) can only be seen within a leg: a cluster whose
    /// leg wall time is not longer than stall_minutes would let a code that never advances run leg after
    /// leg. Every such cluster is named, with the line of stall_minutes in campaign.toml.
    /// </summary>
    private static IReadOnlyList<string> StallProblems(string root)
    {
        var (config, clusters) = Workspace.ReadSettings(root);
        var stall = config.Tracking.StallMinutes;
        var tooShort = config.Clusters
            .Select(m => (Cluster: m, Wall: config.Tracking.LegMinutes ?? clusters[m].WallLimitHours * 60))
            .Where(m => m.Wall <= stall)
            .ToList();
        if (tooShort.Count == 0)
        {
            return Array.Empty<string>();
        }

        var path = Path.Combine(Path.GetFullPath(root), Workspace.ConfigFileName);
        var lines = File.ReadAllLines(path);
        var line = Array.FindIndex(lines, l => l.TrimStart().StartsWith("stall_minutes", StringComparison.Ordinal));
        var where = line < 0 ? $"{path}: [tracking] stall_minutes (default)" : $"{path}:{(line + 1).ToString(CultureInfo.InvariantCulture)}:{(lines[line].IndexOf('s', StringComparison.Ordinal) + 1).ToString(CultureInfo.InvariantCulture)}: stall_minutes";
        var walls = string.Join(", ", tooShort.Select(m => $"{m.Cluster} {m.Wall.ToString("0.###", CultureInfo.InvariantCulture)} min"));
        return new[] { $"{where} = {stall.ToString("0.###", CultureInfo.InvariantCulture)}: expected less than the leg wall time of every cluster ({walls}): a stall could never be seen before the wall-time limit ends the leg" };
    }

    /// <summary>A consistent copy of the workspace's database, config and profiles.</summary>
    public BackupSummary Backup(string root, string destination)
    {
        using var workspace = Workspace.Open(root, _time);
        var result = WorkspaceBackup.Write(workspace, destination);
        return new BackupSummary(workspace.Root, result.Destination, result.Files, result.DatabaseBytes, result.Integrity);
    }
}
