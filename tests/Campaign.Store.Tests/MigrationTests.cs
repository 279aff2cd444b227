using System.Security.Cryptography;
using Campaign.Store.Schema;
using Dapper;
using Microsoft.Data.Sqlite;

namespace Campaign.Store.Tests;

public class MigrationTests
{
    [Fact]
    public void A_new_database_is_at_the_latest_schema_in_WAL_mode_with_foreign_keys_on()
    {
        using var folder = new TempFolder();
        using var connection = CampaignDatabase.Open(folder.File("c.db"), FixedTime.Default);
        Assert.Equal(Migrations.Latest, connection.ExecuteScalar<long>("PRAGMA user_version"));
        Assert.Equal("wal", connection.ExecuteScalar<string>("PRAGMA journal_mode"));
        Assert.Equal(1, connection.ExecuteScalar<long>("PRAGMA foreign_keys"));
        var applied = connection.Query<(long Version, string AppliedAt)>("SELECT version, applied_at FROM schema_migrations ORDER BY version").ToList();
        Assert.Equal(Migrations.All.Select(m => (long)m.Version), applied.Select(a => a.Version));
        Assert.All(applied, a => Assert.Equal("2027-03-01T12:00:00.0000000+00:00", a.AppliedAt));
    }

    [Fact]
    public void Opening_again_applies_nothing()
    {
        using var folder = new TempFolder();
        CampaignDatabase.Open(folder.File("c.db"), FixedTime.Default).Dispose();
        using var connection = CampaignDatabase.Open(folder.File("c.db"), FixedTime.Default);
        Assert.Empty(SchemaMigrator.Migrate(connection, Migrations.All, FixedTime.Default, "c.db"));
    }

    [Fact]
    public void A_database_from_a_newer_build_is_refused_and_left_byte_for_byte_unchanged()
    {
        using var folder = new TempFolder();
        var path = folder.File("c.db");
        using (var connection = CampaignDatabase.Open(path, FixedTime.Default))
        {
            connection.Execute("PRAGMA user_version = 99");
            connection.Execute("PRAGMA wal_checkpoint(TRUNCATE)");
        }

        var before = SHA256.HashData(File.ReadAllBytes(path));
        var error = Assert.Throws<SchemaTooNewException>(() => CampaignDatabase.Open(path, FixedTime.Default));
        Assert.Equal(
            $"c.db has schema version 99, written by a newer campaign; this build knows versions up to {Migrations.Latest}. Use the newer campaign (or a backup from before the upgrade); the database was not changed.",
            error.Message);
        Assert.Equal(before, SHA256.HashData(File.ReadAllBytes(path)));
    }

    [Fact]
    public void A_failing_migration_rolls_back_every_pending_step()
    {
        using var folder = new TempFolder();
        var path = folder.File("c.db");
        var steps = new[]
        {
            new Migration(1, "one", "CREATE TABLE one (x INTEGER)"),
            new Migration(2, "two", "CREATE TABLE two (x INTEGER)"),
            new Migration(3, "broken", "CREATE TABLE three (x INTEGER); INSERT INTO missing VALUES (1)"),
        };
        Assert.Throws<SqliteException>(() => CampaignDatabase.Open(path, FixedTime.Default, steps));
        using var connection = new SqliteConnection($"Data Source={path};Pooling=False");
        connection.Open();
        Assert.Equal(0, connection.ExecuteScalar<long>("PRAGMA user_version"));
        Assert.Equal(0, connection.ExecuteScalar<long>("SELECT count(*) FROM sqlite_master WHERE name IN ('one', 'two', 'three', 'schema_migrations')"));
    }

    [Fact]
    public void Migration_numbers_must_run_without_gaps()
    {
        using var folder = new TempFolder();
        var steps = new[] { new Migration(1, "one", "SELECT 1"), new Migration(3, "three", "SELECT 1") };
        var error = Assert.Throws<InvalidOperationException>(() => CampaignDatabase.Open(folder.File("c.db"), FixedTime.Default, steps));
        Assert.Equal("Migration versions must run 1, 2, 3 ... without gaps; found 3 at position 2.", error.Message);
    }
}
