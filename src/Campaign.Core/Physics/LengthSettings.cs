using Campaign.Core.Domain;

namespace Campaign.Core.Physics;

/// <summary>
/// Parameters of the simulated-length estimate, settable in the workspace config ([length] table).
/// Defaults are common practice (order of magnitude), not published values; see docs/physics.md.
/// </summary>
public sealed record LengthSettings
{
    /// <summary>x = (M omega)^(2/3) where the PN inspiral is stopped; 1/6 is the Schwarzschild ISCO.</summary>
    public double EndOfInspiralX { get; init; } = 1.0 / 6.0;

    /// <summary>Simulated time (M) allowed from the end of the PN inspiral through plunge to the peak of the waveform.</summary>
    public double MergerAllowance { get; init; } = 100;

    /// <summary>Least simulated time (M) evolved after the peak.</summary>
    public double MinimumPostPeak { get; init; } = 150;

    /// <summary>Post-peak time is at least this many damping times of the fundamental quasinormal mode.</summary>
    public double RingdownEFolds { get; init; } = 10;

    /// <summary>Outermost extraction radius (M); the signal needs its tortoise radius in extra time to reach it.</summary>
    public double ExtractionRadius { get; init; } = 500;

    /// <summary>M*omega at the end of inspiral, x_end^(3/2).</summary>
    public double EndOfInspiralOmega => Math.Pow(EndOfInspiralX, 1.5);

    /// <summary>Checks every field, returning all problems (field names as in the config file).</summary>
    public IReadOnlyList<FieldProblem> Validate()
    {
        var checks = new FieldChecks();
        checks.InRange("end_of_inspiral_x", EndOfInspiralX, 0.01, 1.0 / 3.0);
        checks.InRange("merger_allowance_m", MergerAllowance, 0, 10_000);
        checks.InRange("minimum_post_peak_m", MinimumPostPeak, 0, 10_000);
        checks.InRange("ringdown_efolds", RingdownEFolds, 0, 100);
        checks.InRange("extraction_radius_m", ExtractionRadius, 10, 100_000);
        return checks.Problems;
    }
}
