using System.Globalization;
using System.Text.Json;
using Campaign.Core.Lifecycle;
using Campaign.Core.CostModel;
using Dapper;
using Microsoft.Data.Sqlite;

namespace Campaign.Store;

/// <summary>What a plan save is asked to store.</summary>
/// <param name="Objective">coverage or value.</param>
/// <param name="Quantile">Cost quantile of the entries' costs.</param>
/// <param name="Value">Objective value.</param>
/// <param name="UpperBound">Upper bound on the best objective.</param>
/// <param name="Method">How it was solved.</param>
/// <param name="Source">The candidate file.</param>
/// <param name="Entries">Every row: chosen and carried over.</param>
/// <param name="Carried">Configurations carried over because they had started.</param>
/// <param name="Reserved">Charged core-hours taken off each budget before choosing.</param>
/// <param name="Pools">The budgets' use, for the event log and the report.</param>
public sealed record PlanDraft(
    string Objective,
    double Quantile,
    double Value,
    double UpperBound,
    string Method,
    string Source,
    IReadOnlyList<PlanEntry> Entries,
    IReadOnlyList<CarriedConfiguration> Carried,
    IReadOnlyDictionary<string, double> Reserved,
    object Pools);

/// <summary>
/// Versioned plans: each save is a new version with one row per configuration and level (and the trials), kept
/// with the estimate it was chosen on. Whether a plan run has started, finished or been given up is never stored
/// here: it is derived from the tracked runs (<see cref="CampaignStanding"/>).
/// </summary>
public static class PlanStore
{
    private const string EntryColumns =
        "config_id AS ConfigId, level AS Level, kind AS Kind, cluster AS Cluster, cores AS Cores, q AS Q, chi1x AS Chi1x, chi1y AS Chi1y, chi1z AS Chi1z, chi2x AS Chi2x, chi2y AS Chi2y, chi2z AS Chi2z, omega0 AS Omega0, " +
        "target_length AS TargetLength, length_m AS LengthM, median AS Median, mean AS Mean, low AS Low, high AS High, wall_hours AS WallHours, legs AS Legs, node_hours AS NodeHours, " +
        "charged AS Charged, charged_high AS ChargedHigh, cost AS Cost, checkpoint_gb AS CheckpointGb, output_gb AS OutputGb, source AS Source, extrapolation AS Extrapolation, log_se AS LogSe, dof AS Dof, runs AS Runs";

    /// <summary>Saves a new version in one transaction, with its event; returns its id.</summary>
    public static long Save(SqliteConnection connection, PlanDraft draft, TimeProvider time)
    {
        using var transaction = connection.BeginTransaction();
        var id = connection.ExecuteScalar<long>(
            """
            INSERT INTO plans (created_at, objective, quantile, value, upper_bound, method, pools_json, source, carried_json, reserved_json)
            VALUES (@At, @Objective, @Quantile, @Value, @Bound, @Method, @Pools, @Source, @Carried, @Reserved) RETURNING id
            """,
            new
            {
                At = time.GetUtcNow().ToString("O", CultureInfo.InvariantCulture),
                draft.Objective,
                draft.Quantile,
                draft.Value,
                Bound = draft.UpperBound,
                draft.Method,
                Pools = JsonSerializer.Serialize(draft.Pools),
                draft.Source,
                Carried = JsonSerializer.Serialize(draft.Carried),
                Reserved = JsonSerializer.Serialize(draft.Reserved),
            },
            transaction);
        foreach (var e in draft.Entries)
        {
            var r = e.Estimate;
            connection.Execute(
                """
                INSERT INTO plan_entries (plan_id, config_id, level, kind, cluster, cores, q, chi1x, chi1y, chi1z, chi2x, chi2y, chi2z, omega0,
                    target_length, length_m, median, mean, low, high, wall_hours, legs, node_hours, charged, charged_high, cost,
                    checkpoint_gb, output_gb, source, extrapolation, log_se, dof, runs)
                VALUES (@Id, @ConfigId, @Level, @Kind, @Cluster, @Cores, @Q, @Chi1x, @Chi1y, @Chi1z, @Chi2x, @Chi2y, @Chi2z, @Omega0,
                    @TargetLength, @LengthM, @Median, @Mean, @Low, @High, @WallHours, @Legs, @NodeHours, @Charged, @ChargedHigh, @Cost,
                    @CheckpointGb, @OutputGb, @Source, @Extrapolation, @LogSe, @Dof, @Runs)
                """,
                ConfigurationColumns.Parameters(e.Configuration, new
                {
                    Id = id,
                    ConfigId = r.Id,
                    r.Level,
                    Kind = e.Kind == PlanEntryKind.Trials ? "trials" : "run",
                    r.Cluster,
                    r.Cores,
                    e.TargetLength,
                    r.LengthM,
                    r.Median,
                    r.Mean,
                    r.Low,
                    r.High,
                    r.WallHours,
                    r.Legs,
                    r.NodeHours,
                    Charged = r.ChargedCoreHours,
                    r.ChargedHigh,
                    e.Cost,
                    r.CheckpointGb,
                    r.OutputGb,
                    r.Source,
                    Extrapolation = string.Join("\n", r.Extrapolation),
                    LogSe = r.LogStandardError,
                    Dof = double.IsFinite(r.DegreesOfFreedom) ? r.DegreesOfFreedom : 1e308,
                    r.Runs,
                }),
                transaction);
        }

        var carried = draft.Carried.Count == 0 ? "" : $"; carried over (started): {string.Join(", ", draft.Carried.Select(c => c.ConfigId))}";
        EventLog.Append(connection, transaction, time, "plan.save", null, $"plan {id}: {draft.Entries.Select(e => e.ConfigId).Distinct().Count()} configurations, {draft.Objective} {draft.Value.ToString("G6", CultureInfo.InvariantCulture)}{carried}");
        transaction.Commit();
        return id;
    }

    /// <summary>The newest plan, or null.</summary>
    public static PlanVersion? Current(SqliteConnection connection, SqliteTransaction? transaction = null) =>
        connection.ExecuteScalar<long?>("SELECT max(id) FROM plans", transaction: transaction) is { } id ? Version(connection, id, transaction) : null;

    /// <summary>Every plan version's number and when it was saved, oldest first.</summary>
    public static IReadOnlyList<(long Id, DateTimeOffset CreatedAt)> Versions(SqliteConnection connection) =>
        connection.Query<(long Id, string CreatedAt)>("SELECT id, created_at FROM plans ORDER BY id")
            .Select(v => (v.Id, DateTimeOffset.Parse(v.CreatedAt, CultureInfo.InvariantCulture)))
            .ToList();

    /// <summary>Plan version <paramref name="id"/>, or null when there is none.</summary>
    public static PlanVersion? Version(SqliteConnection connection, long id, SqliteTransaction? transaction = null)
    {
        var plan = connection.QueryFirstOrDefault<PlanRow>(
            "SELECT id AS Id, created_at AS CreatedAt, objective AS Objective, quantile AS Quantile, value AS Value, upper_bound AS UpperBound, method AS Method, source AS Source, carried_json AS CarriedJson, reserved_json AS ReservedJson FROM plans WHERE id = @id",
            new { id },
            transaction);
        if (plan is null)
        {
            return null;
        }

        var entries = connection.Query<EntryRow>($"SELECT {EntryColumns} FROM plan_entries WHERE plan_id = @Id ORDER BY config_id, kind, level", new { plan.Id }, transaction)
            .Select(r => r.ToEntry())
            .ToList();
        return new PlanVersion(
            plan.Id,
            DateTimeOffset.Parse(plan.CreatedAt, CultureInfo.InvariantCulture),
            plan.Objective,
            plan.Quantile,
            plan.Value,
            plan.UpperBound,
            plan.Method,
            plan.Source,
            entries,
            JsonSerializer.Deserialize<List<CarriedConfiguration>>(plan.CarriedJson) ?? new List<CarriedConfiguration>(),
            JsonSerializer.Deserialize<Dictionary<string, double>>(plan.ReservedJson) ?? new Dictionary<string, double>());
    }

    /// <summary>
    /// The newest stored entry of each of <paramref name="runs"/> (configuration and level) in any plan version:
    /// for runs tracked from an older plan that the newest one does not hold.
    /// </summary>
    public static IReadOnlyList<PlanEntry> NewestEntries(SqliteConnection connection, IReadOnlyCollection<(string ConfigId, int Level)> runs)
    {
        var found = new List<PlanEntry>();
        foreach (var (configId, level) in runs)
        {
            var row = connection.QueryFirstOrDefault<EntryRow>(
                $"SELECT {EntryColumns} FROM plan_entries WHERE config_id = @configId AND level = @level AND kind = 'run' ORDER BY plan_id DESC LIMIT 1",
                new { configId, level });
            if (row is not null)
            {
                found.Add(row.ToEntry());
            }
        }

        return found;
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

        public string Source { get; set; } = "";

        public string CarriedJson { get; set; } = "[]";

        public string ReservedJson { get; set; } = "{}";
    }

    private sealed class EntryRow : ConfigurationColumns
    {
        public string ConfigId { get; set; } = "";

        public long Level { get; set; }

        public string Kind { get; set; } = "";

        public string Cluster { get; set; } = "";

        public long Cores { get; set; }

        public double? TargetLength { get; set; }

        public double LengthM { get; set; }

        public double Median { get; set; }

        public double Mean { get; set; }

        public double Low { get; set; }

        public double High { get; set; }

        public double WallHours { get; set; }

        public long Legs { get; set; }

        public double NodeHours { get; set; }

        public double Charged { get; set; }

        public double ChargedHigh { get; set; }

        public double Cost { get; set; }

        public double CheckpointGb { get; set; }

        public double OutputGb { get; set; }

        public string Source { get; set; } = "";

        public string Extrapolation { get; set; } = "";

        public double LogSe { get; set; }

        public double Dof { get; set; }

        public long Runs { get; set; }

        public PlanEntry ToEntry()
        {
            var estimate = new EstimateRow(
                ConfigId,
                (int)Level,
                Kind == "trials" ? "ecc" : "run",
                Cluster,
                (int)Cores,
                LengthM,
                Median,
                Mean,
                Low,
                High,
                WallHours,
                (int)Legs,
                NodeHours,
                Charged,
                ChargedHigh,
                CheckpointGb,
                OutputGb,
                Source,
                Extrapolation.Length == 0 ? Array.Empty<string>() : Extrapolation.Split('\n'),
                LogSe,
                Dof >= 1e308 ? double.PositiveInfinity : Dof,
                (int)Runs);
            return new PlanEntry(Configuration, estimate, Cost, TargetLength);
        }
    }
}
