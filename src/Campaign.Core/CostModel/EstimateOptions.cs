namespace Campaign.Core.CostModel;

/// <summary>Options of a proposal estimate, with their defaults.</summary>
public sealed record EstimateOptions
{
    /// <summary>Central probability of every interval (per run and total).</summary>
    public double Interval { get; init; } = 0.9;

    /// <summary>Hours of each job kept free for writing the checkpoint before the wall-time limit.</summary>
    public double CheckpointMarginHours { get; init; } = 0.5;

    /// <summary>Short eccentricity-reduction trial runs per configuration (0: none).</summary>
    public int EccentricityTrials { get; init; }

    /// <summary>Simulated length of each trial run (M), run at the configuration's lowest level.</summary>
    public double EccentricityTrialLength { get; init; } = 1500;

    /// <summary>Monte Carlo draws for the totals.</summary>
    public int Samples { get; init; } = 4000;

    /// <summary>Seed of the Monte Carlo draws.</summary>
    public int Seed { get; init; } = 1;
}
