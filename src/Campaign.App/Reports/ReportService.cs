using System.Globalization;
using Campaign.App.Forecasts;
using Campaign.Core.CostModel;
using Campaign.Core.Domain;
using Campaign.Core.Tracking;
using Campaign.Reports;
using Campaign.Store;

namespace Campaign.App.Reports;

/// <summary>A report to write.</summary>
/// <param name="Workspace">Workspace folder.</param>
/// <param name="Folder">Folder for report.html and its plots.</param>
/// <param name="CandidatesPath">A candidate file for the coverage map and the proposal table, or null for the plan's rows.</param>
/// <param name="CandidatesShown">Its name as the user gave it.</param>
/// <param name="Replicas">Forecast replicas.</param>
public sealed record ReportRequest(string Workspace, string Folder, string? CandidatesPath, string? CandidatesShown, int Replicas);

/// <summary>What was written.</summary>
/// <param name="Report">Path of report.html.</param>
/// <param name="Files">Every file written.</param>
public sealed record ReportResult(string Report, IReadOnlyList<string> Files);

/// <summary>The HTML report: burn-down with the forecast, run progress, coverage map, cost-model check, proposal table.</summary>
public sealed class ReportService
{
    private readonly TimeProvider _time;

    /// <summary>Creates the service.</summary>
    public ReportService(TimeProvider time) => _time = time;

    /// <summary>Gathers the data and writes the report.</summary>
    public ReportResult Write(ReportRequest request)
    {
        var data = Gather(request);
        var files = ReportWriter.Write(data, request.Folder);
        return new ReportResult(Path.Combine(request.Folder, "report.html"), files);
    }

    /// <summary>Everything the report shows, read from the workspace.</summary>
    internal ReportData Gather(ReportRequest request)
    {
        if (request.Replicas is < 10 or > 100_000)
        {
            throw new InvalidInputException(new[] { $"--replicas = {request.Replicas.ToString(CultureInfo.InvariantCulture)}: expected an integer from 10 to 100000" });
        }

        using var workspace = Workspace.Open(request.Workspace, _time);
        var now = _time.GetUtcNow();
        var inputs = CampaignInputs.Load(workspace);
        var model = inputs.Model?.Model;
        var snapshot = CampaignSnapshot.Load(workspace);
        var plan = snapshot.Plan;
        var candidates = request.CandidatesPath is null ? new List<Candidate>() : CampaignInputs.Candidates(workspace, request.CandidatesPath, request.CandidatesShown ?? request.CandidatesPath).ToList();

        var forecast = plan is not null || snapshot.Runs.Any(r => !r.Rehearsal)
            ? new ForecastService(_time).Run(workspace, snapshot, inputs.Logs, model, request.Replicas, 1).Result
            : null;
        var charges = snapshot.Legs.Where(s => !s.IsOpen && s.EndedAt is not null).Select(s => new ChargePoint(s.Cluster, s.EndedAt!.Value, s.Charged ?? 0)).ToList();
        var allocations = workspace.Config.Allocations.Select(a => new AllocationLine(
            a.Cluster,
            new DateTimeOffset(a.Start.ToDateTime(TimeOnly.MinValue), TimeSpan.Zero),
            new DateTimeOffset(a.End.ToDateTime(TimeOnly.MaxValue), TimeSpan.Zero),
            a.CoreHours(workspace.Cluster(a.Cluster)),
            plan?.Entries.Where(e => e.Cluster == a.Cluster).Sum(e => e.Estimate.ChargedCoreHours) ?? 0,
            a.Windows.Select(w => new DateTimeOffset(w.End.ToDateTime(TimeOnly.MaxValue), TimeSpan.Zero)).ToList())).ToList();
        var remaining = snapshot.Standing.Runs.Where(s => s.Run is not null).ToDictionary(s => s.Run!.RunId, s => s.RemainingCost, StringComparer.Ordinal);
        var starts = Store.TrackingStore.Legs(workspace.Connection).ToLookup(s => s.RunId, StringComparer.Ordinal);
        var progress = snapshot.Runs.Select(r =>
        {
            var points = starts[r.RunId].OrderBy(s => s.Number)
                .Select(s => (s.SubmittedAt, s.StartT)).ToList();
            points.Add((r.FinishedAt ?? now, r.Progress));
            return new ProgressLine(r.RunId, r.TargetLength, points, remaining.GetValueOrDefault(r.RunId));
        }).ToList();

        static CoveragePoint Point(BinaryConfiguration c) => new(c.Q.Value, c.ChiEffective, Math.Max(c.Chi1.InPlane, c.Chi2.InPlane));
        var proposal = new List<ProposalRow>();
        if (candidates.Count > 0 && (model is not null || candidates.All(c => c.CoreHours is not null)))
        {
            var estimate = ProposalEstimator.Estimate(candidates, workspace.Clusters, model, inputs.Storage, inputs.Length, new EstimateOptions { Samples = 200 });
            proposal = estimate.Runs.Select(Row).ToList();
        }
        else if (plan is not null)
        {
            // The plan keeps each row's estimate as it was chosen: the table is the estimate, not an approximation.
            proposal = plan.Entries.Select(e => Row(e.Estimate)).ToList();
        }

        var modelCheck = new List<ModelCheckPoint>();
        if (model is not null)
        {
            var tracked = snapshot.Runs.Select(r => r.RunId).ToHashSet(StringComparer.Ordinal);
            for (var i = 0; i < inputs.Training.Observations.Count; i++)
            {
                var p = model.Predict(inputs.Training.Observations[i], 0.9);
                modelCheck.Add(new ModelCheckPoint(p.Median, p.Low, p.High, inputs.Training.CoreHours[i], tracked.Contains(inputs.Training.Observations[i].Id)));
            }
        }

        var data = new ReportData(
            workspace.Config.Name,
            now,
            allocations,
            charges,
            forecast,
            progress,
            candidates.Select(c => Point(c.Spec.Configuration)).ToList(),
            plan?.ConfigIds.Select(id => Point(plan.Entries.First(e => e.ConfigId == id).Configuration)).ToList() ?? new List<CoveragePoint>(),
            snapshot.Runs.Where(r => !r.Rehearsal && r.State == RunState.Finished).Select(r => Point(r.Configuration)).Distinct().ToList(),
            inputs.Logs.Where(l => l.Outcome == RunOutcome.Completed).Select(l => Point(l.Configuration)).Distinct().ToList(),
            modelCheck,
            proposal);
        return data;
    }

    private static ProposalRow Row(EstimateRow r) => new(r.Id + (r.Kind == "ecc" ? " (trials)" : ""), r.Level, r.Cluster, r.Median, r.Low, r.High, r.ChargedCoreHours, r.Legs);
}
