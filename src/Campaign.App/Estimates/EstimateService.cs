using Campaign.Core.CostModel;
using Campaign.Store;

namespace Campaign.App.Estimates;

/// <summary>Estimate a candidate file.</summary>
/// <param name="Workspace">Workspace folder.</param>
/// <param name="Path">Candidate file.</param>
/// <param name="Shown">Its name as the user gave it.</param>
/// <param name="Options">Interval, margins, trials, Monte Carlo settings.</param>
public sealed record EstimateRequest(string Workspace, string Path, string Shown, EstimateOptions Options);

/// <summary>A proposal estimate and what it was made with.</summary>
/// <param name="Estimate">Rows per configuration and level, with totals.</param>
/// <param name="ModelId">The cost model used, or null when every candidate gave its cost.</param>
/// <param name="Storage">The storage fit used.</param>
/// <param name="Allocations">Charged core-hours granted per cluster.</param>
/// <param name="Notes">What the user should know about the inputs.</param>
public sealed record EstimateResult(ProposalEstimate Estimate, long? ModelId, StorageModel Storage, IReadOnlyDictionary<string, double> Allocations, IReadOnlyList<string> Notes);

/// <summary>The proposal estimate: core-hours, wall time, legs, charges and storage per configuration and level.</summary>
public sealed class EstimateService
{
    private readonly TimeProvider _time;

    /// <summary>Creates the service.</summary>
    public EstimateService(TimeProvider time) => _time = time;

    /// <summary>Estimates every candidate of the file with the workspace's model.</summary>
    public EstimateResult Estimate(EstimateRequest request)
    {
        using var workspace = Workspace.Open(request.Workspace, _time);
        var candidates = CampaignInputs.Candidates(workspace, request.Path, request.Shown);
        var inputs = CampaignInputs.Load(workspace);
        var estimate = ProposalEstimator.Estimate(candidates, workspace.Clusters, inputs.Model?.Model, inputs.Storage, inputs.Length, request.Options);
        return new EstimateResult(estimate, inputs.Model?.Id, inputs.Storage, CampaignInputs.Allocations(workspace), inputs.Notes);
    }
}
