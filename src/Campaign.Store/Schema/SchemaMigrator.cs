using System.Globalization;
using Dapper;
using Microsoft.Data.Sqlite;

namespace Campaign.Store.Schema;

/// <summary>
/// Brings a database to the latest schema: every pending migration runs inside one transaction, so a failure
/// leaves the database exactly as it was. A database written by a newer build is refused, never touched.
/// The version lives in PRAGMA user_version; schema_migrations records when each step was applied.
/// </summary>
public static class SchemaMigrator
{
    /// <summary>Applies pending migrations from <paramref name="migrations"/>; returns the versions applied.</summary>
    public static IReadOnlyList<int> Migrate(SqliteConnection connection, IReadOnlyList<Migration> migrations, TimeProvider time, string databaseName)
    {
        CheckSequence(migrations);
        var latest = migrations.Count == 0 ? 0 : migrations[^1].Version;
        var current = connection.ExecuteScalar<long>("PRAGMA user_version");
        if (current > latest)
        {
            throw new SchemaTooNewException(
                $"{databaseName} has schema version {current.ToString(CultureInfo.InvariantCulture)}, written by a newer campaign; this build knows versions up to {latest.ToString(CultureInfo.InvariantCulture)}. Use the newer campaign (or a backup from before the upgrade); the database was not changed.");
        }

        var pending = migrations.Where(m => m.Version > current).ToList();
        if (pending.Count == 0)
        {
            return Array.Empty<int>();
        }

        using var transaction = connection.BeginTransaction();
        connection.Execute("""
            CREATE TABLE IF NOT EXISTS schema_migrations (
                version    INTEGER PRIMARY KEY NOT NULL,
                name       TEXT NOT NULL,
                applied_at TEXT NOT NULL
            ) STRICT
            """, transaction: transaction);
        var now = time.GetUtcNow().ToString("O", CultureInfo.InvariantCulture);
        foreach (var migration in pending)
        {
            connection.Execute(migration.Sql, transaction: transaction);
            connection.Execute(
                "INSERT INTO schema_migrations (version, name, applied_at) VALUES (@Version, @Name, @Now)",
                new { migration.Version, migration.Name, Now = now },
                transaction);
            connection.Execute($"PRAGMA user_version = {migration.Version.ToString(CultureInfo.InvariantCulture)}", transaction: transaction);
        }

        transaction.Commit();
        return pending.Select(m => m.Version).ToList();
    }

    private static void CheckSequence(IReadOnlyList<Migration> migrations)
    {
        for (var i = 0; i < migrations.Count; i++)
        {
            if (migrations[i].Version != i + 1)
            {
                throw new InvalidOperationException($"Migration versions must run 1, 2, 3 ... without gaps; found {migrations[i].Version} at position {i + 1}.");
            }
        }
    }
}
