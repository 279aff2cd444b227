using Campaign.Core.Domain;
using Campaign.Store;
using Dapper;

namespace Campaign.App.Workspaces;

/// <summary>What <see cref="WorkspaceAdmin.Check"/> found.</summary>
/// <param name="Root">The workspace folder.</param>
/// <param name="Config">Its validated settings.</param>
/// <param name="Machines">Its machine profiles.</param>
/// <param name="SchemaVersion">Database schema version.</param>
/// <param name="Integrity">SQLite's quick check ("ok").</param>
public sealed record WorkspaceCheck(string Root, WorkspaceConfig Config, IReadOnlyDictionary<string, MachineProfile> Machines, long SchemaVersion, string Integrity);

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
    public static (WorkspaceConfig Config, IReadOnlyDictionary<string, MachineProfile> Machines) Settings(string root) => Workspace.ReadSettings(root);

    /// <summary>Creates a workspace from a template; returns the files written.</summary>
    public IReadOnlyList<string> Create(string root, string configText, IReadOnlyDictionary<string, string> profiles, bool force) =>
        WorkspaceCreator.Create(root, new WorkspaceTemplate(configText, profiles), force, _time);

    /// <summary>Validates config, profiles and database.</summary>
    public WorkspaceCheck Check(string root)
    {
        using var workspace = Workspace.Open(root, _time);
        var schema = workspace.Connection.ExecuteScalar<long>("PRAGMA user_version");
        var integrity = workspace.Connection.ExecuteScalar<string>("PRAGMA quick_check") ?? "";
        return new WorkspaceCheck(workspace.Root, workspace.Config, workspace.Machines, schema, integrity);
    }

    /// <summary>A consistent copy of the workspace's database, config and profiles.</summary>
    public BackupSummary Backup(string root, string destination)
    {
        using var workspace = Workspace.Open(root, _time);
        var result = WorkspaceBackup.Write(workspace, destination);
        return new BackupSummary(workspace.Root, result.Destination, result.Files, result.DatabaseBytes, result.Integrity);
    }
}
