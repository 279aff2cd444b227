using Campaign.Store.Schema;
using Microsoft.Data.Sqlite;

namespace Campaign.Store;

/// <summary>
/// Opens campaign.db: WAL journal (readers do not block the writer), foreign keys on, a busy timeout so
/// concurrent commands wait instead of failing, and the schema brought up to date in one transaction.
/// </summary>
public static class CampaignDatabase
{
    /// <summary>How long a writer waits for another writer before giving up.</summary>
    public static readonly TimeSpan BusyTimeout = TimeSpan.FromSeconds(30);

    /// <summary>Opens (creating when absent) the database at <paramref name="path"/> and migrates it.</summary>
    public static SqliteConnection Open(string path, TimeProvider time, IReadOnlyList<Migration>? migrations = null)
    {
        var builder = new SqliteConnectionStringBuilder
        {
            DataSource = path,
            Mode = SqliteOpenMode.ReadWriteCreate,
            Pooling = false,
            DefaultTimeout = (int)BusyTimeout.TotalSeconds,
        };
        if (path != ":memory:")
        {
            OwnerOnly.Create(path);
        }

        var connection = new SqliteConnection(builder.ToString());
        try
        {
            connection.Open();
            Execute(connection, $"PRAGMA busy_timeout = {(int)BusyTimeout.TotalMilliseconds}");
            Execute(connection, "PRAGMA journal_mode = WAL");
            Execute(connection, "PRAGMA foreign_keys = ON");
            Execute(connection, "PRAGMA synchronous = NORMAL");
            SchemaMigrator.Migrate(connection, migrations ?? Migrations.All, time, Path.GetFileName(path));
            return connection;
        }
        catch
        {
            connection.Dispose();
            throw;
        }
    }

    private static void Execute(SqliteConnection connection, string sql)
    {
        using var command = connection.CreateCommand();
        command.CommandText = sql;
        command.ExecuteNonQuery();
    }
}
