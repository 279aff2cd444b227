namespace Campaign.Core.Physics;

/// <summary>
/// Leading-order (quadrupole) inspiral of a circular binary.
/// Source: P. C. Peters, "Gravitational radiation and the motion of two point masses",
/// Phys. Rev. 136, B1224 (1964). Units G = c = M = 1.
/// </summary>
public static class Peters
{
    /// <summary>Time to coalescence tau = (5/256) M / eta (M omega)^(-8/3).</summary>
    public static double TimeToCoalescence(double eta, double omega) =>
        5.0 / 256.0 / eta * Math.Pow(omega, -8.0 / 3.0);

    /// <summary>Orbits between two frequencies: N = [(M omega0)^(-5/3) - (M omega1)^(-5/3)] / (64 pi eta).
    /// Pass <see cref="double.PositiveInfinity"/> as <paramref name="omega1"/> for orbits to coalescence.</summary>
    public static double Orbits(double eta, double omega0, double omega1) =>
        (Math.Pow(omega0, -5.0 / 3.0) - (double.IsPositiveInfinity(omega1) ? 0 : Math.Pow(omega1, -5.0 / 3.0))) / (64 * Math.PI * eta);
}
