namespace Campaign.Core.Domain;

/// <summary>
/// Dimensionless spin vector chi = S/m^2 of one hole, in the frame where the orbital angular momentum
/// is along z. |chi| &lt;= 1 (a Kerr black hole cannot exceed it); values above are rejected, never clamped.
/// </summary>
public readonly record struct Spin
{
    private Spin(double x, double y, double z) => (X, Y, Z) = (x, y, z);

    /// <summary>A non-spinning hole.</summary>
    public static Spin Zero => default;

    /// <summary>In-plane x component.</summary>
    public double X { get; }

    /// <summary>In-plane y component.</summary>
    public double Y { get; }

    /// <summary>Component along the orbital angular momentum.</summary>
    public double Z { get; }

    /// <summary>|chi|.</summary>
    public double Magnitude => Math.Sqrt(X * X + Y * Y + Z * Z);

    /// <summary>|chi in-plane| = sqrt(x^2 + y^2); non-zero makes the orbit precess.</summary>
    public double InPlane => Math.Sqrt(X * X + Y * Y);

    /// <summary>True when the spin is aligned (or anti-aligned) with the orbital angular momentum.</summary>
    public bool IsAligned => X == 0 && Y == 0;

    /// <summary>An aligned spin with only a z component.</summary>
    public static Spin Aligned(double z) => From(0, 0, z);

    /// <summary>Creates a spin, throwing <see cref="InvalidInputException"/> when |chi| &gt; 1 or a component is not finite.</summary>
    public static Spin From(double x, double y, double z, string name = "chi")
    {
        var checks = new FieldChecks();
        Check(checks, name, x, y, z);
        checks.ThrowIfAny();
        return new Spin(x, y, z);
    }

    /// <summary>The range check used everywhere a spin enters: each component finite, magnitude at most 1.</summary>
    public static bool Check(FieldChecks checks, string name, double x, double y, double z)
    {
        var ok = checks.InRange(name + "x", x, -1, 1);
        ok &= checks.InRange(name + "y", y, -1, 1);
        ok &= checks.InRange(name + "z", z, -1, 1);
        if (!ok)
        {
            return false;
        }

        var magnitude = Math.Sqrt(x * x + y * y + z * z);
        if (magnitude > 1)
        {
            checks.Add("|" + name + "|", FieldProblem.Show(magnitude), "at most 1 (a Kerr black hole has |chi| <= 1; the value is rejected, not clamped)");
            return false;
        }

        return true;
    }
}
