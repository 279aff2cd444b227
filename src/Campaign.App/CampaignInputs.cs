using Campaign.Core.Configuration;
using Campaign.Core.CostModel;
using Campaign.Core.Domain;
using Campaign.Core.Text;
using Campaign.Store;

namespace Campaign.App;

/// <summary>
/// What the estimating use cases read from a workspace, loaded in one place: the run logs, the training set, the
/// storage fit and the cost model in use; and candidate files read with the workspace's settings.
/// </summary>
/// <param name="Logs">Every stored run log.</param>
/// <param name="Training">The logs as the cost model sees them.</param>
/// <param name="Storage">Storage per run fitted to the logs.</param>
/// <param name="Model">The cost model in use, or null.</param>
/// <param name="Length">The length settings estimates use: those the model was fitted with (lengths of new runs must
/// be computed as the training lengths were), else the workspace's.</param>
/// <param name="Notes">What the user should know about these inputs (for example that [length] changed since the fit).</param>
internal sealed record CampaignInputs(IReadOnlyList<RunLog> Logs, TrainingSet Training, StorageModel Storage, StoredCostModel? Model, Core.Physics.LengthSettings Length, IReadOnlyList<string> Notes)
{
    /// <summary>Loads them from an open workspace.</summary>
    public static CampaignInputs Load(Workspace workspace)
    {
        var logs = RunLogStore.All(workspace.Connection);
        var model = CostModelStore.Latest(workspace.Connection);
        var length = model?.Length ?? workspace.Config.Length;
        var training = TrainingSet.From(logs, workspace.Clusters, length);
        var notes = new List<string>();
        if (model?.Length is { } fitted && fitted != workspace.Config.Length)
        {
            notes.Add($"cost model {model.Id} was fitted with other [length] settings than campaign.toml has now; lengths are computed with the model's settings, so its estimates are reproduced. Run 'campaign model fit' to use the new settings.");
        }

        return new CampaignInputs(logs, training, model?.Storage ?? StorageModel.Fit(training.Lengths), model, length, notes);
    }

    /// <summary>Reads and validates a candidate file with the workspace's settings; a clear error when it is missing.</summary>
    public static IReadOnlyList<Candidate> Candidates(Workspace workspace, string path, string shown)
    {
        var config = workspace.Config;
        return CandidateReader.Read(InputFile.Read(path, shown, "a candidate file (CSV)"), shown, config.Length, config.Defaults, config.DefaultCluster, workspace.Clusters.Keys.ToList());
    }

    /// <summary>Charged core-hours granted per cluster (all its allocations).</summary>
    public static IReadOnlyDictionary<string, double> Allocations(Workspace workspace) =>
        workspace.Config.Allocations.GroupBy(a => a.Cluster).ToDictionary(g => g.Key, g => g.Sum(a => a.CoreHours(workspace.Cluster(a.Cluster))));
}
