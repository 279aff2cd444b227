using System.Globalization;
using System.Text.Json;
using Campaign.Core.CostModel;
using Dapper;
using Microsoft.Data.Sqlite;

namespace Campaign.Store;

/// <summary>The cost_models table: every fit is kept; the newest is the one in use.</summary>
public static class CostModelStore
{
    private static readonly JsonSerializerOptions Options = new() { WriteIndented = false };

    /// <summary>Stores a fitted model (with an event row) in one transaction and returns its id.</summary>
    public static long Save(SqliteConnection connection, FittedCostModel model, TimeProvider time)
    {
        using var transaction = connection.BeginTransaction();
        var id = connection.ExecuteScalar<long>(
            "INSERT INTO cost_models (fitted_at, run_count, model_json) VALUES (@At, @Runs, @Json) RETURNING id",
            new { At = time.GetUtcNow().ToString("O", CultureInfo.InvariantCulture), Runs = model.RunCount, Json = JsonSerializer.Serialize(model, Options) },
            transaction);
        EventLog.Append(connection, transaction, time, "model.fit", null, $"model {id}: {model.FeatureSet}, {model.RunCount} runs");
        transaction.Commit();
        return id;
    }

    /// <summary>The newest model with its id and time, or null when none was fitted.</summary>
    public static (long Id, string FittedAt, FittedCostModel Model)? Latest(SqliteConnection connection)
    {
        var row = connection.QueryFirstOrDefault<(long Id, string FittedAt, string Json)>("SELECT id, fitted_at, model_json FROM cost_models ORDER BY id DESC LIMIT 1");
        if (row.Json is null)
        {
            return null;
        }

        return (row.Id, row.FittedAt, JsonSerializer.Deserialize<FittedCostModel>(row.Json, Options)!);
    }
}
