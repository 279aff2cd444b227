using System.Globalization;
using Campaign.Core.Lifecycle;
using Dapper;
using Microsoft.Data.Sqlite;

namespace Campaign.Store;

/// <summary>
/// Clusters that could not be used in a cycle (their batch system unreachable or broken), and when the last cycle
/// ran: what <c>status</c> needs to say how fresh its information is.
/// </summary>
public static class ClusterFaultStore
{
    private const string LastCycleKey = "last_cycle_at";

    /// <summary>Records that <paramref name="cluster"/> failed now; keeps the time of the first failure of the spell. Returns true when the spell is new.</summary>
    public static bool Record(SqliteConnection connection, SqliteTransaction transaction, string cluster, string message, DateTimeOffset at)
    {
        var now = at.ToString("O", CultureInfo.InvariantCulture);
        var existed = connection.ExecuteScalar<long>("SELECT count(*) FROM cluster_faults WHERE cluster = @cluster", new { cluster }, transaction) > 0;
        connection.Execute(
            """
            INSERT INTO cluster_faults (cluster, since, last_at, message) VALUES (@cluster, @now, @now, @message)
            ON CONFLICT (cluster) DO UPDATE SET last_at = excluded.last_at, message = excluded.message
            """,
            new { cluster, now, message },
            transaction);
        return !existed;
    }

    /// <summary>Clears the fault of <paramref name="cluster"/> (it answered); returns the fault that was cleared, if any.</summary>
    public static ClusterFault? Clear(SqliteConnection connection, SqliteTransaction transaction, string cluster)
    {
        var fault = All(connection, transaction).FirstOrDefault(f => f.Cluster == cluster);
        if (fault is not null)
        {
            connection.Execute("DELETE FROM cluster_faults WHERE cluster = @cluster", new { cluster }, transaction);
        }

        return fault;
    }

    /// <summary>Every cluster at fault now.</summary>
    public static IReadOnlyList<ClusterFault> All(SqliteConnection connection, SqliteTransaction? transaction = null) =>
        connection.Query<(string Cluster, string Since, string LastAt, string Message)>("SELECT cluster, since, last_at, message FROM cluster_faults ORDER BY cluster", transaction: transaction)
            .Select(f => new ClusterFault(f.Cluster, Parse(f.Since), Parse(f.LastAt), f.Message))
            .ToList();

    /// <summary>Notes that a cycle ran at <paramref name="at"/>.</summary>
    public static void NoteCycle(SqliteConnection connection, SqliteTransaction transaction, DateTimeOffset at) =>
        connection.Execute(
            "INSERT INTO workspace_info (key, value) VALUES (@key, @value) ON CONFLICT (key) DO UPDATE SET value = excluded.value",
            new { key = LastCycleKey, value = at.ToString("O", CultureInfo.InvariantCulture) },
            transaction);

    /// <summary>When the last cycle ran, or null when none has.</summary>
    public static DateTimeOffset? LastCycle(SqliteConnection connection) =>
        connection.ExecuteScalar<string?>("SELECT value FROM workspace_info WHERE key = @key", new { key = LastCycleKey }) is { } text ? Parse(text) : null;

    /// <summary>Notes that <paramref name="cluster"/> answered in the cycle at <paramref name="at"/> (its last contact).</summary>
    public static void NoteReached(SqliteConnection connection, SqliteTransaction transaction, string cluster, DateTimeOffset at) =>
        connection.Execute(
            "INSERT INTO workspace_info (key, value) VALUES (@key, @value) ON CONFLICT (key) DO UPDATE SET value = excluded.value",
            new { key = ReachedKey + cluster, value = at.ToString("O", CultureInfo.InvariantCulture) },
            transaction);

    /// <summary>When each cluster last answered a cycle, by cluster name.</summary>
    public static IReadOnlyDictionary<string, DateTimeOffset> Reached(SqliteConnection connection) =>
        connection.Query<(string Key, string Value)>("SELECT key, value FROM workspace_info WHERE key LIKE 'reached_at:%'")
            .ToDictionary(r => r.Key[ReachedKey.Length..], r => Parse(r.Value), StringComparer.Ordinal);

    private const string ReachedKey = "reached_at:";

    private static DateTimeOffset Parse(string text) => DateTimeOffset.Parse(text, CultureInfo.InvariantCulture);
}
