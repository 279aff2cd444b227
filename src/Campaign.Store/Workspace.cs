using Campaign.Core.Configuration;
using Campaign.Core.Domain;
using Microsoft.Data.Sqlite;

namespace Campaign.Store;

/// <summary>
/// An open workspace: the folder with campaign.toml (human-edited settings), machines/*.toml (one profile per
/// machine) and campaign.db (history and state, SQLite).
/// </summary>
public sealed class Workspace : IDisposable
{
    /// <summary>The config file's name.</summary>
    public const string ConfigFileName = "campaign.toml";

    /// <summary>The database file's name.</summary>
    public const string DatabaseFileName = "campaign.db";

    /// <summary>The folder of machine profiles.</summary>
    public const string MachinesFolderName = "machines";

    private Workspace(string root, WorkspaceConfig config, IReadOnlyDictionary<string, MachineProfile> machines, SqliteConnection connection)
    {
        Root = root;
        Config = config;
        Machines = machines;
        Connection = connection;
    }

    /// <summary>Absolute path of the workspace folder.</summary>
    public string Root { get; }

    /// <summary>The validated settings.</summary>
    public WorkspaceConfig Config { get; }

    /// <summary>Machine profiles by name.</summary>
    public IReadOnlyDictionary<string, MachineProfile> Machines { get; }

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
        var (config, machines) = ReadSettings(root);
        var connection = CampaignDatabase.Open(PathOf(root, DatabaseFileName), time);
        return new Workspace(root, config, machines, connection);
    }

    /// <summary>True when <paramref name="root"/> holds a campaign.toml.</summary>
    public static bool Exists(string root) => File.Exists(PathOf(Path.GetFullPath(root), ConfigFileName));

    /// <summary>
    /// Reads and validates the config and machine profiles of the workspace in <paramref name="root"/> without
    /// touching its database (for commands that only need settings).
    /// </summary>
    public static (WorkspaceConfig Config, IReadOnlyDictionary<string, MachineProfile> Machines) ReadSettings(string root)
    {
        root = Path.GetFullPath(root);
        var configPath = PathOf(root, ConfigFileName);
        if (!File.Exists(configPath))
        {
            throw new InvalidInputException(new[] { $"{root}: not a campaign workspace (no {ConfigFileName}): expected a folder made by 'campaign init DIR', or give one with --dir" });
        }

        var machines = MachineCatalog.Load(PathOf(root, MachinesFolderName), PathOf(root, MachinesFolderName));
        var config = WorkspaceConfigReader.Read(Campaign.Core.Text.StrictUtf8.Decode(File.ReadAllBytes(configPath), configPath), configPath, machines.Keys.ToList());
        return (config, machines);
    }

    /// <summary>The profile of a machine the config lists.</summary>
    public MachineProfile Machine(string name) => Machines[name];

    /// <inheritdoc />
    public void Dispose() => Connection.Dispose();
}
