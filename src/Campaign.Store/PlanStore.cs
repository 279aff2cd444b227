using System.Globalization;
using System.Text.Json;
using Campaign.Core.Domain;
using Campaign.Core.Selection;
using Dapper;
using Microsoft.Data.Sqlite;

namespace Campaign.Store;

/// <summary>A configuration in a stored plan.</summary>
/// <param name="ConfigId">Candidate id.</param>
/// <param name="Machine">Machine it is assigned to.</param>
/// <param name="Configuration">Its physics.</param>
/// <param name="Levels">Resolution levels.</param>
/// <param name="Cores">Cores per job.</param>
/// <param name="Cost">Charged core-hours at the plan's quantile.</param>
/// <param name="Median">Median charged core-hours.</param>
/// <param name="High">Upper charged core-hours.</param>
/// <param name="Status">"planned" until the run starts; anything else means it has started and is never dropped.</param>
public sealed record PlannedRun(string ConfigId, string Machine, BinaryConfiguration Configuration, IReadOnlyList<int> Levels, int Cores, double Cost, double Median, double High, string Status);

/// <summary>A stored plan version.</summary>
public sealed record Plan(long Id, string CreatedAt, string Objective, double Quantile, double Value, double UpperBound, string Method, IReadOnlyList<PlannedRun> Runs);

/// <summary>
/// Versioned plans: each save is a new version; runs of the previous version that have started are carried into
/// the new one with their status, whatever the new selection says (re-planning plans around them).
/// </summary>
public static class PlanStore
{
    /// <summary>The status of a run that has not started.</summary>
    public const string Planned = "planned";

    /// <summary>Saves a new version in one transaction; returns its id and how many started runs were carried over.</summary>
    public static (long Id, int CarriedOver) Save(SqliteConnection connection, string objective, double quantile, SelectionResult result, IReadOnlyList<PlannedRun> runs, IReadOnlyList<PoolUse> pools, string source, TimeProvider time)
    {
        var previous = Current(connection);
        var started = previous?.Runs.Where(r => r.Status != Planned).ToList() ?? new List<PlannedRun>();
        var merged = runs.Select(r => started.FirstOrDefault(s => s.ConfigId == r.ConfigId) ?? r).ToList();
        var carried = started.Where(s => runs.All(r => r.ConfigId != s.ConfigId)).ToList();
        merged.AddRange(carried);

        using var transaction = connection.BeginTransaction();
        var id = connection.ExecuteScalar<long>(
            """
            INSERT INTO plans (created_at, objective, quantile, value, upper_bound, method, pools_json, source)
            VALUES (@At, @Objective, @Quantile, @Value, @Bound, @Method, @Pools, @Source) RETURNING id
            """,
            new
            {
                At = time.GetUtcNow().ToString("O", CultureInfo.InvariantCulture),
                Objective = objective,
                Quantile = quantile,
                Value = result.Objective,
                Bound = result.UpperBound,
                result.Method,
                Pools = JsonSerializer.Serialize(pools),
                Source = source,
            },
            transaction);
        foreach (var r in merged)
        {
            var c = r.Configuration;
            connection.Execute(
                """
                INSERT INTO plan_runs (plan_id, config_id, machine, q, chi1x, chi1y, chi1z, chi2x, chi2y, chi2z, omega0, levels, cores, cost, median, high, status)
                VALUES (@Id, @ConfigId, @Machine, @Q, @Chi1x, @Chi1y, @Chi1z, @Chi2x, @Chi2y, @Chi2z, @Omega0, @Levels, @Cores, @Cost, @Median, @High, @Status)
                """,
                ConfigurationColumns.Parameters(c, new
                {
                    Id = id,
                    r.ConfigId,
                    r.Machine,
                    Levels = string.Join(";", r.Levels),
                    r.Cores,
                    r.Cost,
                    r.Median,
                    r.High,
                    r.Status,
                }),
                transaction);
        }

        EventLog.Append(connection, transaction, time, "plan.save", null, $"plan {id}: {merged.Count} configurations ({carried.Count} started runs carried over), {objective} {result.Objective.ToString("G6", CultureInfo.InvariantCulture)}");
        transaction.Commit();
        return (id, carried.Count);
    }

    /// <summary>The newest plan, or null.</summary>
    public static Plan? Current(SqliteConnection connection)
    {
        var plan = connection.QueryFirstOrDefault<PlanRow>("SELECT id AS Id, created_at AS CreatedAt, objective AS Objective, quantile AS Quantile, value AS Value, upper_bound AS UpperBound, method AS Method FROM plans ORDER BY id DESC LIMIT 1");
        if (plan is null)
        {
            return null;
        }

        var runs = connection.Query<RunRow>(
            "SELECT config_id AS ConfigId, machine AS Machine, q AS Q, chi1x AS Chi1x, chi1y AS Chi1y, chi1z AS Chi1z, chi2x AS Chi2x, chi2y AS Chi2y, chi2z AS Chi2z, omega0 AS Omega0, levels AS Levels, cores AS Cores, cost AS Cost, median AS Median, high AS High, status AS Status FROM plan_runs WHERE plan_id = @Id ORDER BY config_id",
            new { plan.Id })
            .Select(r => new PlannedRun(
                r.ConfigId,
                r.Machine,
                r.Configuration,
                r.Levels.Split(';').Select(l => int.Parse(l, CultureInfo.InvariantCulture)).ToList(),
                (int)r.Cores,
                r.Cost,
                r.Median,
                r.High,
                r.Status))
            .ToList();
        return new Plan(plan.Id, plan.CreatedAt, plan.Objective, plan.Quantile, plan.Value, plan.UpperBound, plan.Method, runs);
    }

    private sealed class PlanRow
    {
        public long Id { get; set; }

        public string CreatedAt { get; set; } = "";

        public string Objective { get; set; } = "";

        public double Quantile { get; set; }

        public double Value { get; set; }

        public double UpperBound { get; set; }

        public string Method { get; set; } = "";
    }

    private sealed class RunRow : ConfigurationColumns
    {
        public string ConfigId { get; set; } = "";

        public string Machine { get; set; } = "";

        public string Levels { get; set; } = "";

        public long Cores { get; set; }

        public double Cost { get; set; }

        public double Median { get; set; }

        public double High { get; set; }

        public string Status { get; set; } = "";
    }
}
