using Campaign.Core.Configuration;
using Campaign.Core.Domain;
using Microsoft.Data.Sqlite;

namespace Campaign.Store;

/// <summary>
/// An open workspace: the folder with campaign.toml (human-edited settings), clusters/*.toml (one profile per
/// cluster) and campaign.db (history and state, SQLite).
/// </summary>
public sealed class Workspace : IDisposable
{
    /// <summary>The config file's name.</summary>
    public const string ConfigFileName = "campaign.toml";

    /// <summary>The database file's name.</summary>
    public const string DatabaseFileName = "campaign.db";

    /// <summary>The folder of cluster profiles.</summary>
    public const string ClustersFolderName = "clusters";

    /// <summary>Where workspaces made before schema version 9 keep their cluster profiles.</summary>
    public const string FormerClustersFolderName = "machines";

    private Workspace(string root, WorkspaceConfig config, IReadOnlyDictionary<string, ClusterProfile> clusters, SqliteConnection connection)
    {
        Root = root;
        Config = config;
        Clusters = clusters;
        Connection = connection;
        Id = Dapper.SqlMapper.ExecuteScalar<string>(connection, "SELECT value FROM workspace_info WHERE key = 'workspace_id'") ?? "";
    }

    /// <summary>A short random id of this workspace (8 hex digits), made when its database was: part of every job name.</summary>
    public string Id { get; }

    /// <summary>Absolute path of the workspace folder.</summary>
    public string Root { get; }

    /// <summary>The validated settings.</summary>
    public WorkspaceConfig Config { get; }

    /// <summary>Cluster profiles by name.</summary>
    public IReadOnlyDictionary<string, ClusterProfile> Clusters { get; }

    /// <summary>The open, migrated database.</summary>
    public SqliteConnection Connection { get; }

    /// <summary>Path of a file inside the workspace.</summary>
    public static string PathOf(string root, string name) => Path.Combine(root, name);

    /// <summary>
    /// Opens the workspace in <paramref name="root"/>: validates profiles and config (every problem reported, the
    /// database not opened when they are wrong), then opens and migrates campaign.db.
    /// </summary>
    public static Workspace Open(string root, TimeProvider time)
    {
        root = Path.GetFullPath(root);
        var (config, clusters) = ReadSettings(root);
        var database = PathOf(root, DatabaseFileName);
        if (!File.Exists(database) || new FileInfo(database).Length == 0)
        {
            // Never a fresh, empty database where a workspace is: the history would be silently replaced.
            throw new InvalidOperationException($"{database}: the workspace's database is {(File.Exists(database) ? "empty" : "missing")} though {ConfigFileName} is here; nothing was created. Restore campaign.db from a backup (docs/operations.md), or start a new workspace with 'campaign init'");
        }

        var connection = CampaignDatabase.Open(database, time);
        return new Workspace(root, config, clusters, connection);
    }

    /// <summary>
    /// True while the database file at the workspace's path is still the one this workspace opened: it exists, is
    /// not empty and carries the same workspace id. A daemon checks it every cycle, so that a deleted, emptied or
    /// replaced file is never written on blindly.
    /// </summary>
    public bool IsStillItsDatabase(out string why)
    {
        var path = PathOf(Root, DatabaseFileName);
        why = "";
        if (!File.Exists(path))
        {
            why = $"{path} was deleted";
            return false;
        }

        if (new FileInfo(path).Length == 0)
        {
            why = $"{path} was emptied";
            return false;
        }

        try
        {
            using var probe = new SqliteConnection(new SqliteConnectionStringBuilder { DataSource = path, Mode = SqliteOpenMode.ReadOnly, Pooling = false }.ToString());
            probe.Open();
            var id = Dapper.SqlMapper.ExecuteScalar<string>(probe, "SELECT value FROM workspace_info WHERE key = 'workspace_id'");
            if (id != Id)
            {
                why = $"{path} was replaced by another database (workspace id {id ?? "none"}, opened {Id})";
                return false;
            }
        }
        catch (SqliteException e)
        {
            why = $"{path} cannot be read as this workspace's database any more ({e.Message})";
            return false;
        }

        return true;
    }

    /// <summary>True when <paramref name="root"/> holds a campaign.toml.</summary>
    public static bool Exists(string root) => File.Exists(PathOf(Path.GetFullPath(root), ConfigFileName));

    /// <summary>
    /// Reads and validates the config and cluster profiles of the workspace in <paramref name="root"/> without
    /// touching its database (for commands that only need settings).
    /// </summary>
    public static (WorkspaceConfig Config, IReadOnlyDictionary<string, ClusterProfile> Clusters) ReadSettings(string root)
    {
        root = Path.GetFullPath(root);
        var configPath = PathOf(root, ConfigFileName);
        if (!File.Exists(configPath))
        {
            throw new InvalidInputException(new[] { $"{root}: not a campaign workspace (no {ConfigFileName}): expected a folder made by 'campaign init DIR', or give one with --dir" });
        }

        // Workspaces made before the profiles' folder got its current name keep them in the former one.
        var folder = PathOf(root, ClustersFolderName);
        var former = PathOf(root, FormerClustersFolderName);
        var useFormer = !Directory.Exists(folder) && Directory.Exists(former);
        var clusters = ClusterCatalog.Load(useFormer ? former : folder, useFormer ? former : folder);
        var config = WorkspaceConfigReader.Read(Campaign.Core.Text.StrictUtf8.Decode(File.ReadAllBytes(configPath), configPath), configPath, clusters.Keys.ToList());
        if (useFormer)
        {
            config = config with { Notices = config.Notices.Prepend($"{former}: the former name of the profiles' folder '{ClustersFolderName}'; read as that (rename it)").ToList() };
        }

        return (config, clusters);
    }

    /// <summary>The profile of a cluster the config lists.</summary>
    public ClusterProfile Cluster(string name) => Clusters[name];

    /// <inheritdoc />
    public void Dispose() => Connection.Dispose();
}
