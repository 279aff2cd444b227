using Campaign.Core.Domain;

namespace Campaign.Core.Selection;

/// <summary>
/// Coordinates of a configuration for the coverage objective: (ln q, chi1z, chi2z, |chi1 in-plane|,
/// |chi2 in-plane|), each divided by its scale. Defaults (ln 2, 0.2, 0.2, 0.3, 0.3): a factor 2 in mass ratio,
/// 0.2 in an aligned spin or 0.3 in an in-plane spin magnitude is one unit of distance. Settable in the
/// workspace config ([selection]).
/// </summary>
public sealed record ParameterSpace(double LnQScale, double Chi1zScale, double Chi2zScale, double Chi1InPlaneScale, double Chi2InPlaneScale)
{
    /// <summary>The default scales.</summary>
    public static ParameterSpace Default { get; } = new(Math.Log(2), 0.2, 0.2, 0.3, 0.3);

    /// <summary>The scaled coordinates of a configuration.</summary>
    public double[] Coordinates(BinaryConfiguration c) => new[]
    {
        Math.Log(c.Q.Value) / LnQScale,
        c.Chi1.Z / Chi1zScale,
        c.Chi2.Z / Chi2zScale,
        c.Chi1.InPlane / Chi1InPlaneScale,
        c.Chi2.InPlane / Chi2InPlaneScale,
    };

    /// <summary>Checks every scale (names as in the config file).</summary>
    public IReadOnlyList<FieldProblem> Validate()
    {
        var checks = new FieldChecks();
        checks.Positive("ln_q_scale", LnQScale, 100);
        checks.Positive("chi1z_scale", Chi1zScale, 100);
        checks.Positive("chi2z_scale", Chi2zScale, 100);
        checks.Positive("chi1_inplane_scale", Chi1InPlaneScale, 100);
        checks.Positive("chi2_inplane_scale", Chi2InPlaneScale, 100);
        return checks.Problems;
    }
}
