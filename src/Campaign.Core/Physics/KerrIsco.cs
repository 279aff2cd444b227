namespace Campaign.Core.Physics;

/// <summary>
/// Innermost stable circular orbit of a Kerr black hole of unit mass.
/// Source: J. M. Bardeen, W. H. Press and S. A. Teukolsky, Astrophys. J. 178, 347 (1972), Eq. 2.21.
/// A positive spin means a prograde orbit.
/// </summary>
public static class KerrIsco
{
    /// <summary>ISCO radius (Boyer-Lindquist, units of the hole's mass): 6 at a = 0, 1 at a = 1, 9 at a = -1.</summary>
    public static double Radius(double a)
    {
        var z1 = 1 + Math.Cbrt(1 - a * a) * (Math.Cbrt(1 + a) + Math.Cbrt(1 - a));
        var z2 = Math.Sqrt(3 * a * a + z1 * z1);
        return 3 + z2 - Math.Sign(a) * Math.Sqrt((3 - z1) * (3 + z1 + 2 * z2));
    }

    /// <summary>Specific energy at the ISCO, E = sqrt(1 - 2/(3 r_isco)); sqrt(8/9) at a = 0.</summary>
    public static double SpecificEnergy(double a) => Math.Sqrt(1 - 2 / (3 * Radius(a)));
}
