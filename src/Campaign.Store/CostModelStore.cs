using System.Globalization;
using System.Text.Json;
using Campaign.Core.CostModel;
using Campaign.Core.Physics;
using Dapper;
using Microsoft.Data.Sqlite;

namespace Campaign.Store;

/// <summary>A stored cost model with the settings it was made with.</summary>
/// <param name="Id">Model version.</param>
/// <param name="FittedAt">When it was fitted.</param>
/// <param name="Model">The fit.</param>
/// <param name="Length">The [length] settings its training lengths were computed with (null for models stored before they were kept).</param>
/// <param name="Storage">The storage fit made with it (null likewise).</param>
public sealed record StoredCostModel(long Id, string FittedAt, FittedCostModel Model, LengthSettings? Length, StorageModel? Storage);

/// <summary>The cost_models table: every fit is kept; the newest is the one in use.</summary>
public static class CostModelStore
{
    private static readonly JsonSerializerOptions Options = new() { WriteIndented = false };

    /// <summary>Stores a fitted model with its length settings and storage fit (and an event row) in one transaction; returns its id.</summary>
    public static long Save(SqliteConnection connection, FittedCostModel model, TimeProvider time, LengthSettings? length = null, StorageModel? storage = null)
    {
        using var transaction = connection.BeginTransaction();
        var id = connection.ExecuteScalar<long>(
            "INSERT INTO cost_models (fitted_at, run_count, model_json, length_json, storage_json) VALUES (@At, @Runs, @Json, @Length, @Storage) RETURNING id",
            new
            {
                At = time.GetUtcNow().ToString("O", CultureInfo.InvariantCulture),
                Runs = model.RunCount,
                Json = JsonSerializer.Serialize(model, Options),
                Length = length is null ? null : JsonSerializer.Serialize(length, Options),
                Storage = storage is null ? null : JsonSerializer.Serialize(storage, Options),
            },
            transaction);
        EventLog.Append(connection, transaction, time, "model.fit", null, $"model {id}: {model.FeatureSet}, {model.RunCount} runs");
        transaction.Commit();
        return id;
    }

    /// <summary>The newest model with its id, time and settings, or null when none was fitted.</summary>
    public static StoredCostModel? Latest(SqliteConnection connection)
    {
        var row = connection.QueryFirstOrDefault<(long Id, string FittedAt, string Json, string? Length, string? Storage)>(
            "SELECT id, fitted_at, model_json, length_json, storage_json FROM cost_models ORDER BY id DESC LIMIT 1");
        if (row.Json is null)
        {
            return null;
        }

        return new StoredCostModel(
            row.Id,
            row.FittedAt,
            JsonSerializer.Deserialize<FittedCostModel>(row.Json, Options)!,
            row.Length is null ? null : JsonSerializer.Deserialize<LengthSettings>(row.Length, Options),
            row.Storage is null ? null : JsonSerializer.Deserialize<StorageModel>(row.Storage, Options));
    }
}
