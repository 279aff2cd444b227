namespace Campaign.Core.Domain;

/// <summary>
/// Mass ratio q = m1/m2 &gt;= 1 of a binary (the heavier hole is "1"). Simulations are scale-free,
/// so masses are reported as fractions of the total mass M = m1 + m2.
/// </summary>
public readonly record struct MassRatio
{
    /// <summary>Largest mass ratio accepted (far beyond today's simulations; it catches typos).</summary>
    public const double Maximum = 1000;

    private MassRatio(double q) => Value = q;

    /// <summary>q = m1/m2.</summary>
    public double Value { get; }

    /// <summary>Heavier mass as a fraction of M: q/(1+q).</summary>
    public double Mass1 => Value / (1 + Value);

    /// <summary>Lighter mass as a fraction of M: 1/(1+q).</summary>
    public double Mass2 => 1 / (1 + Value);

    /// <summary>Symmetric mass ratio eta = m1 m2 / M^2 = q/(1+q)^2, 0.25 at q = 1.</summary>
    public double SymmetricMassRatio => Value / ((1 + Value) * (1 + Value));

    /// <summary>Creates a mass ratio, throwing <see cref="InvalidInputException"/> outside [1, 1000] or for NaN.</summary>
    public static MassRatio From(double q)
    {
        var checks = new FieldChecks();
        Check(checks, "q", q);
        checks.ThrowIfAny();
        return new MassRatio(q);
    }

    /// <summary>The range check used everywhere a mass ratio enters; q &lt; 1 gets a hint to swap the holes.</summary>
    public static bool Check(FieldChecks checks, string field, double q)
    {
        string? hint = null;
        if (double.IsFinite(q) && q > 0 && q < 1)
        {
            hint = $"q is m1/m2 with the heavier hole first; swap the holes: q = {FieldProblem.Show(1 / q)} and exchange chi1 and chi2";
        }

        return checks.InRange(field, q, 1, Maximum, hint);
    }

    /// <inheritdoc />
    public override string ToString() => FieldProblem.Show(Value);
}
