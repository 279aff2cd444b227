namespace Campaign.Core.Physics;

/// <summary>
/// The fundamental l = m = 2, n = 0 quasinormal mode of the remnant, from the fit of
/// E. Berti, V. Cardoso and C. M. Will, Phys. Rev. D 73, 064030 (2006):
/// M_f omega = 1.5251 - 1.1568 (1 - chi_f)^0.1292, Q = 0.7000 + 1.4187 (1 - chi_f)^(-0.4990),
/// damping time tau = 2 Q / omega. Frequencies and times are in units of the remnant mass M_f.
/// </summary>
public readonly record struct QuasinormalMode(double Frequency, double QualityFactor)
{
    /// <summary>Amplitude e-folding time 2Q/omega, in units of M_f.</summary>
    public double DampingTime => 2 * QualityFactor / Frequency;

    /// <summary>The fundamental (2,2,0) mode of a remnant with dimensionless spin chi_f in [0, 1).</summary>
    public static QuasinormalMode Fundamental(double remnantSpin)
    {
        if (!(remnantSpin >= 0 && remnantSpin < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(remnantSpin), remnantSpin, "The remnant spin must be in [0, 1).");
        }

        var frequency = 1.5251 - 1.1568 * Math.Pow(1 - remnantSpin, 0.1292);
        var quality = 0.7000 + 1.4187 * Math.Pow(1 - remnantSpin, -0.4990);
        return new QuasinormalMode(frequency, quality);
    }
}
