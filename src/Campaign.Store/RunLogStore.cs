using System.Globalization;
using System.Text.Json;
using Campaign.Core.Configuration;
using Campaign.Core.Domain;
using Dapper;
using Microsoft.Data.Sqlite;

namespace Campaign.Store;

/// <summary>What an import did.</summary>
public sealed record ImportResult(int Added, int Replaced);

/// <summary>The run_logs table: import in one transaction, read back as domain values.</summary>
public static class RunLogStore
{
    /// <summary>
    /// Imports rows in one transaction. A run id already in the workspace is an error (listing every such row)
    /// unless <paramref name="replace"/>; then the stored run is replaced.
    /// </summary>
    public static ImportResult Import(SqliteConnection connection, IReadOnlyList<RunLogRow> rows, string source, bool replace, TimeProvider time)
    {
        var existing = connection.Query<string>("SELECT run_id FROM run_logs").ToHashSet(StringComparer.Ordinal);
        var clashes = rows.Where(r => existing.Contains(r.Log.RunId)).ToList();
        if (clashes.Count > 0 && !replace)
        {
            throw new InvalidInputException(clashes.Select(r =>
                $"{source}:{r.Line.ToString(CultureInfo.InvariantCulture)}:1: run_id = {r.Log.RunId}: expected a run id not yet in the workspace (use --replace to overwrite stored runs)").ToList());
        }

        var now = time.GetUtcNow().ToString("O", CultureInfo.InvariantCulture);
        using var transaction = connection.BeginTransaction();
        foreach (var row in rows)
        {
            Upsert(connection, transaction, row.Log, JsonSerializer.Serialize(row.Extra), source, now);
        }

        var result = new ImportResult(rows.Count - clashes.Count, clashes.Count);
        EventLog.Append(connection, transaction, time, "logs.import", null, $"{result.Added} runs added, {result.Replaced} replaced from {source}");
        transaction.Commit();
        return result;
    }

    /// <summary>Inserts a run, or replaces the stored run of the same id, in the caller's transaction.</summary>
    public static void Upsert(SqliteConnection connection, SqliteTransaction transaction, RunLog log, string extraJson, string source, string at)
    {
        var c = log.Configuration;
        connection.Execute(
            """
            INSERT INTO run_logs (run_id, q, chi1x, chi1y, chi1z, chi2x, chi2y, chi2z, omega0, level, cores, cluster, wall_hours, outcome,
                core_hours, t_end, orbits, legs, checkpoint_gb, output_gb, started, finished, extra_json, source, imported_at)
            VALUES (@RunId, @Q, @Chi1x, @Chi1y, @Chi1z, @Chi2x, @Chi2y, @Chi2z, @Omega0, @Level, @Cores, @Cluster, @WallHours, @Outcome,
                @CoreHours, @TEnd, @Orbits, @Legs, @CheckpointGb, @OutputGb, @Started, @Finished, @Extra, @Source, @At)
            ON CONFLICT (run_id) DO UPDATE SET
                q = excluded.q, chi1x = excluded.chi1x, chi1y = excluded.chi1y, chi1z = excluded.chi1z, chi2x = excluded.chi2x,
                chi2y = excluded.chi2y, chi2z = excluded.chi2z, omega0 = excluded.omega0, level = excluded.level, cores = excluded.cores,
                cluster = excluded.cluster, wall_hours = excluded.wall_hours, outcome = excluded.outcome, core_hours = excluded.core_hours,
                t_end = excluded.t_end, orbits = excluded.orbits, legs = excluded.legs, checkpoint_gb = excluded.checkpoint_gb,
                output_gb = excluded.output_gb, started = excluded.started, finished = excluded.finished, extra_json = excluded.extra_json,
                source = excluded.source, imported_at = excluded.imported_at
            """,
            ConfigurationColumns.Parameters(c, new
            {
                log.RunId,
                log.Level,
                log.Cores,
                log.Cluster,
                log.WallHours,
                Outcome = log.Outcome.ToString().ToLowerInvariant(),
                log.CoreHours,
                log.TEnd,
                log.Orbits,
                log.Legs,
                log.CheckpointGb,
                log.OutputGb,
                Started = log.Started?.ToString("O", CultureInfo.InvariantCulture),
                Finished = log.Finished?.ToString("O", CultureInfo.InvariantCulture),
                Extra = extraJson,
                Source = source,
                At = at,
            }),
            transaction);
    }

    /// <summary>The source of each stored run among <paramref name="runIds"/> ("campaign tracking" for runs the campaign finished, the file name for imports).</summary>
    public static IReadOnlyDictionary<string, string> Sources(SqliteConnection connection, IEnumerable<string> runIds, SqliteTransaction? transaction = null)
    {
        var result = new Dictionary<string, string>(StringComparer.Ordinal);
        foreach (var chunk in runIds.Chunk(500))
        {
            foreach (var (id, source) in connection.Query<(string, string)>("SELECT run_id, source FROM run_logs WHERE run_id IN @chunk", new { chunk }, transaction))
            {
                result[id] = source;
            }
        }

        return result;
    }

    /// <summary>The source written for runs the campaign tracked to their end.</summary>
    public const string TrackingSource = "campaign tracking";

    /// <summary>Every stored run, ordered by id.</summary>
    public static IReadOnlyList<RunLog> All(SqliteConnection connection) =>
        connection.Query<Row>("SELECT * FROM run_logs ORDER BY run_id").Select(ToLog).ToList();

    private static RunLog ToLog(Row r)
    {
        var configuration = new BinaryConfiguration(MassRatio.From(r.q), Spin.From(r.chi1x, r.chi1y, r.chi1z, "chi1"), Spin.From(r.chi2x, r.chi2y, r.chi2z, "chi2"), r.omega0);
        var outcome = Enum.Parse<RunOutcome>(r.outcome, ignoreCase: true);
        return new RunLog(r.run_id, configuration, (int)r.level, (int)r.cores, r.cluster, r.wall_hours, outcome, r.core_hours, r.t_end, r.orbits,
            r.legs is null ? null : (int)r.legs.Value, r.checkpoint_gb, r.output_gb, Parse(r.started), Parse(r.finished));
    }

    private static DateTimeOffset? Parse(string? text) => text is null ? null : DateTimeOffset.Parse(text, CultureInfo.InvariantCulture);

#pragma warning disable IDE1006, SA1300 // column names as SQLite stores them
    private sealed record Row(
        string run_id, double q, double chi1x, double chi1y, double chi1z, double chi2x, double chi2y, double chi2z, double omega0, long level,
        long cores, string cluster, double wall_hours, string outcome, double? core_hours, double? t_end, double? orbits, long? legs,
        double? checkpoint_gb, double? output_gb, string? started, string? finished, string extra_json, string source, string imported_at);
#pragma warning restore IDE1006, SA1300
}
