using System.Globalization;
using Campaign.Core.CostModel;
using Campaign.Core.Domain;
using Campaign.Store;

namespace Campaign.App.Models;

/// <summary>A cost model as stored, with its version and time.</summary>
/// <param name="Id">Version.</param>
/// <param name="FittedAt">When it was fitted (ISO 8601).</param>
/// <param name="Model">The fit.</param>
public sealed record CostModelVersion(long Id, string FittedAt, FittedCostModel Model);

/// <summary>Fitting the cost model to the stored run logs, and showing the one in use.</summary>
public sealed class CostModelService
{
    private readonly TimeProvider _time;

    /// <summary>Creates the service.</summary>
    public CostModelService(TimeProvider time) => _time = time;

    /// <summary>Fits the model to the stored runs and stores it with the length settings and storage fit it was made with.</summary>
    public CostModelVersion Fit(string workspaceRoot, CostFitOptions options, IProgress<double>? progress = null)
    {
        using var workspace = Workspace.Open(workspaceRoot, _time);
        var training = TrainingSet.From(RunLogStore.All(workspace.Connection), workspace.Clusters, workspace.Config.Length);
        var model = CostModelFitter.Fit(training.Observations, training.CoreHours, options, training.Skipped, progress);
        var id = CostModelStore.Save(workspace.Connection, model, _time, workspace.Config.Length, StorageModel.Fit(training.Lengths));
        return new CostModelVersion(id, _time.GetUtcNow().ToString("O", CultureInfo.InvariantCulture), model);
    }

    /// <summary>The model in use; a clear error when none was fitted.</summary>
    public CostModelVersion Current(string workspaceRoot)
    {
        using var workspace = Workspace.Open(workspaceRoot, _time);
        var latest = CostModelStore.Latest(workspace.Connection)
            ?? throw new InvalidInputException(new[] { $"{workspace.Root}: no cost model yet: expected 'campaign logs import FILE' then 'campaign model fit'" });
        return new CostModelVersion(latest.Id, latest.FittedAt, latest.Model);
    }
}
