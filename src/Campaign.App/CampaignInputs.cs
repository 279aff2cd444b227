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
internal sealed record CampaignInputs(IReadOnlyList<RunLog> Logs, TrainingSet Training, StorageModel Storage, StoredCostModel? Model)
{
    /// <summary>Loads them from an open workspace.</summary>
    public static CampaignInputs Load(Workspace workspace)
    {
        var logs = RunLogStore.All(workspace.Connection);
        var training = TrainingSet.From(logs, workspace.Machines, workspace.Config.Length);
        return new CampaignInputs(logs, training, StorageModel.Fit(training.Lengths), CostModelStore.Latest(workspace.Connection));
    }

    /// <summary>Reads and validates a candidate file with the workspace's settings; a clear error when it is missing.</summary>
    public static IReadOnlyList<Candidate> Candidates(Workspace workspace, string path, string shown)
    {
        if (!File.Exists(path))
        {
            throw new InvalidInputException(new[] { $"{shown}: no such file: expected a candidate file (CSV)" });
        }

        var config = workspace.Config;
        return CandidateReader.Read(StrictUtf8.Decode(File.ReadAllBytes(path), shown), shown, config.Length, config.Defaults, config.DefaultMachine, workspace.Machines.Keys.ToList());
    }

    /// <summary>Charged core-hours granted per machine (all its allocations).</summary>
    public static IReadOnlyDictionary<string, double> Allocations(Workspace workspace) =>
        workspace.Config.Allocations.GroupBy(a => a.Machine).ToDictionary(g => g.Key, g => g.Sum(a => a.CoreHours(workspace.Machine(a.Machine))));
}
