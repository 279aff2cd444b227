using Dapper;
using Microsoft.Data.Sqlite;

namespace Campaign.Store;

/// <summary>What a backup wrote.</summary>
/// <param name="Destination">The backup folder.</param>
/// <param name="Files">Files copied, relative to the folder.</param>
/// <param name="DatabaseBytes">Size of the database copy.</param>
/// <param name="Integrity">PRAGMA integrity_check of the copy ("ok").</param>
public sealed record BackupResult(string Destination, IReadOnlyList<string> Files, long DatabaseBytes, string Integrity);

/// <summary>
/// A consistent copy of a workspace's own state: the database through SQLite's online backup (safe while the
/// daemon writes: it copies one consistent snapshot), the config, the cluster profiles and the leg script.
/// Run folders (checkpoints, simulation output) are not copied: they belong on storage the site backs up.
/// </summary>
public static class WorkspaceBackup
{
    /// <summary>The workspace_info key a backup copy carries until its first cycle has looked later jobs up by name.</summary>
    public const string RestoredKey = "reconcile_jobs_by_name";

    /// <summary>True when the workspace's database is a backup copy whose later jobs have not been looked up yet.</summary>
    public static bool NeedsJobLookup(SqliteConnection connection) =>
        connection.ExecuteScalar<string?>("SELECT value FROM workspace_info WHERE key = @key", new { key = RestoredKey }) == "pending";

    /// <summary>Marks the look-up after a restore as done.</summary>
    public static void JobLookupDone(SqliteConnection connection, SqliteTransaction transaction) =>
        connection.Execute("DELETE FROM workspace_info WHERE key = @key", new { key = RestoredKey }, transaction);

    public static BackupResult Write(Workspace workspace, string destination)
    {
        destination = Path.GetFullPath(destination);
        if (Directory.Exists(destination) && Directory.EnumerateFileSystemEntries(destination).Any())
        {
            throw new IOException($"{destination}: the backup folder is not empty; give a new folder");
        }

        Directory.CreateDirectory(destination);
        if (!OperatingSystem.IsWindows())
        {
            File.SetUnixFileMode(destination, UnixFileMode.UserRead | UnixFileMode.UserWrite | UnixFileMode.UserExecute);
        }

        var files = new List<string>();
        void Copy(string relative)
        {
            var from = Path.Combine(workspace.Root, relative);
            if (!File.Exists(from))
            {
                return;
            }

            var to = Path.Combine(destination, relative);
            Directory.CreateDirectory(Path.GetDirectoryName(to)!);
            File.Copy(from, to);
            files.Add(relative);
        }

        Copy(Workspace.ConfigFileName);
        foreach (var profile in Directory.EnumerateFiles(Path.Combine(workspace.Root, Workspace.ClustersFolderName), "*.toml").Order(StringComparer.Ordinal))
        {
            Copy(Path.Combine(Workspace.ClustersFolderName, Path.GetFileName(profile)));
        }

        Copy("run-leg.sh");
        var database = Path.Combine(destination, Workspace.DatabaseFileName);
        using (var target = new SqliteConnection(new SqliteConnectionStringBuilder { DataSource = database, Pooling = false }.ToString()))
        {
            target.Open();
            workspace.Connection.BackupDatabase(target);

            // The copy knows it is a copy: whoever tracks with it (after a restore) first looks up, by name, every job
            // the workspace may have submitted after this moment, before submitting anything.
            target.Execute("INSERT INTO workspace_info (key, value) VALUES (@key, 'pending') ON CONFLICT (key) DO UPDATE SET value = 'pending'", new { key = RestoredKey });
        }

        if (!OperatingSystem.IsWindows())
        {
            File.SetUnixFileMode(database, UnixFileMode.UserRead | UnixFileMode.UserWrite);
        }

        files.Add(Workspace.DatabaseFileName);
        string integrity;
        using (var check = new SqliteConnection(new SqliteConnectionStringBuilder { DataSource = database, Mode = SqliteOpenMode.ReadOnly, Pooling = false }.ToString()))
        {
            check.Open();
            integrity = check.ExecuteScalar<string>("PRAGMA integrity_check") ?? "";
        }

        return new BackupResult(destination, files, new FileInfo(database).Length, integrity);
    }
}
