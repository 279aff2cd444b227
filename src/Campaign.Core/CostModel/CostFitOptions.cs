namespace Campaign.Core.CostModel;

/// <summary>Options of <see cref="CostModelFitter"/>, with their defaults.</summary>
public sealed record CostFitOptions
{
    /// <summary>Use Huber's robust regression (IRLS, k = 1.345) to down-weight runs that limped.</summary>
    public bool Robust { get; init; }

    /// <summary>Cross-validation folds (at most the number of runs).</summary>
    public int Folds { get; init; } = 5;

    /// <summary>Seed of the fold assignment.</summary>
    public int Seed { get; init; } = 1;

    /// <summary>Central probability of the intervals scored in cross-validation.</summary>
    public double IntervalLevel { get; init; } = 0.9;

    /// <summary>
    /// Fewest runs per coefficient for a fit on the data alone; below max(<see cref="MinimumRuns"/>,
    /// this x coefficients) the prior exponents are blended in.
    /// </summary>
    public int RunsPerCoefficient { get; init; } = 4;

    /// <summary>Fewest runs for a fit on the data alone, whatever the number of coefficients.</summary>
    public int MinimumRuns { get; init; } = 12;

    /// <summary>Prior standard deviation of each exponent (ln units).</summary>
    public double PriorSd { get; init; } = 0.5;

    /// <summary>Typical residual SD assumed when weighing the prior against the data (ln units).</summary>
    public double PriorResidualSd { get; init; } = 0.3;

    /// <summary>Runs a cluster needs before its own factor is learned.</summary>
    public int MinRunsPerCluster { get; init; } = 5;
}
