using Campaign.Core.CostModel;
using Campaign.Core.Domain;
using Campaign.Core.Physics;

namespace Campaign.Core.Tests.CostModel;

public class ProposalEstimatorTests
{
    private static readonly ClusterProfile Whole = new("whole", "", BatchSystemKind.Slurm, 64, 256, 48, true, 1.0, 1.0, 10, 10, 1, 2);
    private static readonly ClusterProfile Shared = new("shared", "", BatchSystemKind.Pbs, 48, 192, 24, false, 0.8, 0.5, 10, 10, 1, 2);
    private static readonly Dictionary<string, ClusterProfile> Clusters = new() { ["whole"] = Whole, ["shared"] = Shared };

    private static Candidate Candidate(string id, string cluster, int cores, double? coreHours = null, params int[] levels)
    {
        var config = new BinaryConfiguration(MassRatio.From(2), Spin.Aligned(0.3), Spin.Zero, 0.018);
        return new Candidate(id, new RunSpec(id, config, levels.Length == 0 ? new[] { 1 } : levels, cores), cluster, 1, false, coreHours);
    }

    private static FittedCostModel Model(int runs = 200, int seed = 4)
    {
        var random = new Random(seed);
        var data = new List<CostObservation>();
        var cost = new List<double>();
        for (var i = 0; i < runs; i++)
        {
            var o = new CostObservation("r" + i, Math.Log(3000 + 9000 * random.NextDouble()), Math.Log(1 + 5 * random.NextDouble()), random.NextDouble(), 1 + random.Next(3), Math.Log(64 << random.Next(3)), "whole", 0);
            data.Add(o);
            cost.Add(Math.Exp(1 + o.LogLength + 0.8 * o.LogQ + 0.3 * o.SpinTerm + 0.7 * o.Level + 0.25 * (2 * random.NextDouble() - 1)));
        }

        return CostModelFitter.Fit(data, cost, new CostFitOptions());
    }

    [Fact]
    public void Given_costs_give_wall_time_legs_node_hours_and_charges_by_the_cluster_policy()
    {
        // 100 cores on 64-core nodes charged whole: 2 nodes. 5000 core-hours -> 50 h wall; 50 / (48 - 0.5) -> 2 legs;
        // node-hours 100; charged 50 h x 128 cores = 6400.
        var estimate = ProposalEstimator.Estimate(new[] { Candidate("a", "whole", 100, 5000) }, Clusters, null, StorageModel.RuleOfThumb, new LengthSettings(), new EstimateOptions());
        var row = Assert.Single(estimate.Runs);
        Assert.Equal(50, row.WallHours, 9);
        Assert.Equal(2, row.Legs);
        Assert.Equal(100, row.NodeHours, 9);
        Assert.Equal(6400, row.ChargedCoreHours, 9);
        Assert.Equal(5000, estimate.Total.Median, 9);
        Assert.Equal(6400, estimate.Total.ChargedMedian, 9);
        // Shared nodes with a 0.8 factor: charged = 0.8 x consumed.
        var shared = ProposalEstimator.Estimate(new[] { Candidate("b", "shared", 100, 5000) }, Clusters, null, StorageModel.RuleOfThumb, new LengthSettings(), new EstimateOptions());
        Assert.Equal(4000, shared.Runs[0].ChargedCoreHours, 9);
        Assert.Equal(3, shared.Runs[0].Legs); // 50 h / 23.5 h
    }

    [Fact]
    public void Without_a_model_candidates_without_a_cost_are_refused()
    {
        var error = Assert.Throws<InvalidInputException>(() => ProposalEstimator.Estimate(new[] { Candidate("a", "whole", 64) }, Clusters, null, StorageModel.RuleOfThumb, new LengthSettings(), new EstimateOptions()));
        Assert.StartsWith("no cost model in the workspace and 1 candidates without core_hours (a)", error.Message);
    }

    [Fact]
    public void A_single_run_total_agrees_with_its_own_prediction()
    {
        var model = Model();
        var estimate = ProposalEstimator.Estimate(new[] { Candidate("a", "whole", 128, null, 2) }, Clusters, model, StorageModel.RuleOfThumb, new LengthSettings(), new EstimateOptions { Samples = 20000 });
        var row = estimate.Runs[0];
        Assert.Equal(row.Median, estimate.Total.Median, row.Median * 0.03);
        Assert.Equal(row.Mean, estimate.Total.Mean, row.Mean * 0.03);
        Assert.Equal(Math.Log(row.High / row.Low), Math.Log(estimate.Total.High / estimate.Total.Low), 0.05);
    }

    [Fact]
    public void Shared_parameter_uncertainty_keeps_the_total_interval_wider_than_independent_errors_would()
    {
        // Few logs: large coefficient uncertainty shared by all 40 identical runs. Treating the runs as independent
        // would shrink the relative width of the total like 1/sqrt(40); the Monte Carlo must not.
        var model = Model(runs: 14, seed: 9);
        var candidates = Enumerable.Range(0, 40).Select(i => Candidate("c" + i, "whole", 128, null, 3)).ToList();
        var estimate = ProposalEstimator.Estimate(candidates, Clusters, model, StorageModel.RuleOfThumb, new LengthSettings(), new EstimateOptions { Samples = 4000 });
        var row = estimate.Runs[0];
        var perRunSe = Math.Log(row.High / row.Low) / 2 / 1.645;
        var parameterSe = Math.Sqrt(perRunSe * perRunSe - model.ResidualSd * model.ResidualSd);
        var totalSe = Math.Log(estimate.Total.High / estimate.Total.Low) / 2 / 1.645;
        var independent = perRunSe / Math.Sqrt(40);
        Assert.True(totalSe > 1.5 * independent, $"total ln-SE {totalSe:F4} should well exceed the independent {independent:F4}");
        Assert.InRange(totalSe, 0.7 * parameterSe, 1.3 * Math.Sqrt(parameterSe * parameterSe + model.ResidualSd * model.ResidualSd / 40));
    }

    [Fact]
    public void Large_totals_drawn_through_the_central_limit_keep_the_log_normal_mean_and_agree_with_row_by_row_draws()
    {
        // Mean of a log-normal (textbook): E exp(Y) = exp(mu + sigma^2 / 2). For row r with ln cost x_r'b* + e_r,
        // b* ~ N(b, S) and e_r ~ N(0, s^2): E cost_r = exp(x_r'b + x_r'S x_r / 2 + s^2 / 2), summed over the rows.
        var model = Model();
        var random = new Random(11);
        var config = new BinaryConfiguration(MassRatio.From(2), Spin.Aligned(0.3), Spin.Zero, 0.018);
        Candidate Many(int i) => new("c" + i, new RunSpec("c" + i, new BinaryConfiguration(MassRatio.From(1 + 4 * random.NextDouble()), Spin.Aligned(0.5 * random.NextDouble()), Spin.Zero, 0.016 + 0.003 * random.NextDouble()), new[] { 1 + random.Next(3) }, 128), "whole", 1, false, null);
        var large = Enumerable.Range(0, ProposalEstimator.CentralLimitRows + 100).Select(Many).ToList();
        var estimate = ProposalEstimator.Estimate(large, Clusters, model, StorageModel.RuleOfThumb, new LengthSettings(), new EstimateOptions { Samples = 20000 });
        var expected = estimate.Runs.Sum(r => r.Mean);
        Assert.Equal(expected, estimate.Total.Mean, expected * 0.01);

        // The same rows split over two clusters of equal policy below the threshold are drawn row by row: the same total.
        var half = large.Select((c, i) => i % 2 == 0 ? c : c with { Cluster = "whole2" }).ToList();
        var clusters = new Dictionary<string, ClusterProfile>(Clusters) { ["whole2"] = Whole with { Name = "whole2" } };
        _ = config;
        var rowByRow = ProposalEstimator.Estimate(half.Take(2 * (ProposalEstimator.CentralLimitRows - 1)).ToList(), clusters, model, StorageModel.RuleOfThumb, new LengthSettings(), new EstimateOptions { Samples = 20000 });
        var clt = ProposalEstimator.Estimate(large.Take(2 * (ProposalEstimator.CentralLimitRows - 1)).ToList(), Clusters, model, StorageModel.RuleOfThumb, new LengthSettings(), new EstimateOptions { Samples = 20000 });
        Assert.Equal(rowByRow.Total.Median, clt.Total.Median, clt.Total.Median * 0.01);
        Assert.Equal(Math.Log(rowByRow.Total.High / rowByRow.Total.Low), Math.Log(clt.Total.High / clt.Total.Low), 0.02);
    }

    [Fact]
    public void Bad_options_are_reported_together()
    {
        var options = new EstimateOptions { Interval = 1.2, CheckpointMarginHours = 30, Samples = 10 };
        var error = Assert.Throws<InvalidInputException>(() => ProposalEstimator.Estimate(new[] { Candidate("a", "shared", 64, 100) }, Clusters, null, StorageModel.RuleOfThumb, new LengthSettings(), options));
        Assert.Equal(
            new[]
            {
                "--interval = 1.2: expected a finite number greater than 0 and less than 1",
                "--samples = 10: expected an integer from 100 to 1000000",
                "--checkpoint-margin = 30: expected less than the wall-time limit of shared, 24 h",
            },
            error.Problems);
    }
}
