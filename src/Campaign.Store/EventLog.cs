using System.Globalization;
using Dapper;
using Microsoft.Data.Sqlite;

namespace Campaign.Store;

/// <summary>One row of the workspace's event log.</summary>
public sealed record EventEntry(long Id, string At, string Kind, string? Subject, string Detail);

/// <summary>Append-only log of what happened in the workspace, written in the same transaction as the change.</summary>
public static class EventLog
{
    /// <summary>Appends an event inside <paramref name="transaction"/>.</summary>
    public static void Append(SqliteConnection connection, SqliteTransaction transaction, TimeProvider time, string kind, string? subject, string detail)
    {
        connection.Execute(
            "INSERT INTO events (at, kind, subject, detail) VALUES (@At, @Kind, @Subject, @Detail)",
            new { At = time.GetUtcNow().ToString("O", CultureInfo.InvariantCulture), Kind = kind, Subject = subject, Detail = detail },
            transaction);
    }

    /// <summary>The most recent events, newest last.</summary>
    public static IReadOnlyList<EventEntry> Recent(SqliteConnection connection, int count) =>
        connection.Query<EventEntry>(
            "SELECT id AS Id, at AS At, kind AS Kind, subject AS Subject, detail AS Detail FROM (SELECT * FROM events ORDER BY id DESC LIMIT @Count) ORDER BY id",
            new { Count = count }).ToList();
}
