using System.Globalization;
using Campaign.Core.Lifecycle;
using Dapper;
using Microsoft.Data.Sqlite;

namespace Campaign.Store;

/// <summary>
/// Machines that could not be used in a cycle (their batch system unreachable or broken), and when the last cycle
/// ran: what <c>status</c> needs to say how fresh its information is.
/// </summary>
public static class MachineFaultStore
{
    private const string LastCycleKey = "last_cycle_at";

    /// <summary>Records that <paramref name="machine"/> failed now; keeps the time of the first failure of the spell. Returns true when the spell is new.</summary>
    public static bool Record(SqliteConnection connection, SqliteTransaction transaction, string machine, string message, DateTimeOffset at)
    {
        var now = at.ToString("O", CultureInfo.InvariantCulture);
        var existed = connection.ExecuteScalar<long>("SELECT count(*) FROM machine_faults WHERE machine = @machine", new { machine }, transaction) > 0;
        connection.Execute(
            """
            INSERT INTO machine_faults (machine, since, last_at, message) VALUES (@machine, @now, @now, @message)
            ON CONFLICT (machine) DO UPDATE SET last_at = excluded.last_at, message = excluded.message
            """,
            new { machine, now, message },
            transaction);
        return !existed;
    }

    /// <summary>Clears the fault of <paramref name="machine"/> (it answered); returns the fault that was cleared, if any.</summary>
    public static MachineFault? Clear(SqliteConnection connection, SqliteTransaction transaction, string machine)
    {
        var fault = All(connection, transaction).FirstOrDefault(f => f.Machine == machine);
        if (fault is not null)
        {
            connection.Execute("DELETE FROM machine_faults WHERE machine = @machine", new { machine }, transaction);
        }

        return fault;
    }

    /// <summary>Every machine at fault now.</summary>
    public static IReadOnlyList<MachineFault> All(SqliteConnection connection, SqliteTransaction? transaction = null) =>
        connection.Query<(string Machine, string Since, string LastAt, string Message)>("SELECT machine, since, last_at, message FROM machine_faults ORDER BY machine", transaction: transaction)
            .Select(f => new MachineFault(f.Machine, Parse(f.Since), Parse(f.LastAt), f.Message))
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

    private static DateTimeOffset Parse(string text) => DateTimeOffset.Parse(text, CultureInfo.InvariantCulture);
}
