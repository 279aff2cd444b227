using Campaign.Core.Physics;

namespace Campaign.Core.Domain;

/// <summary>
/// Mutable builder for <see cref="BinaryConfiguration"/> and <see cref="RunSpec"/>: collect fields as they are
/// read (from a file row, options, a config), then <see cref="Validate"/> reports every problem at once and
/// <see cref="BuildConfiguration"/> / <see cref="BuildRunSpec"/> make the immutable values.
/// Field names in problems are the column and option names users type: q, chi1x ... chi2z, omega0, orbits,
/// level, cores.
/// </summary>
public sealed class BinaryConfigurationDraft
{
    /// <summary>Name of the configuration (run id or candidate id).</summary>
    public string Name { get; set; } = "";

    /// <summary>Mass ratio m1/m2.</summary>
    public double? Q { get; set; }

    /// <summary>Spin components of the heavier hole (default 0).</summary>
    public double Chi1X { get; set; }

    /// <inheritdoc cref="Chi1X"/>
    public double Chi1Y { get; set; }

    /// <inheritdoc cref="Chi1X"/>
    public double Chi1Z { get; set; }

    /// <summary>Spin components of the lighter hole (default 0).</summary>
    public double Chi2X { get; set; }

    /// <inheritdoc cref="Chi2X"/>
    public double Chi2Y { get; set; }

    /// <inheritdoc cref="Chi2X"/>
    public double Chi2Z { get; set; }

    /// <summary>Initial orbital frequency M*omega0; give this or <see cref="Orbits"/>.</summary>
    public double? Omega0 { get; set; }

    /// <summary>Target number of orbits to the end of inspiral; converted to M*omega0 with TaylorT4.</summary>
    public double? Orbits { get; set; }

    /// <summary>Resolution levels to run.</summary>
    public List<long> Levels { get; } = new();

    /// <summary>Cores per job.</summary>
    public long? Cores { get; set; }

    /// <summary>Checks the physical fields (q, spins, omega0 or orbits) and, when asked, levels and cores.</summary>
    public IReadOnlyList<FieldProblem> Validate(LengthSettings settings, bool includeRunFields = false)
    {
        var checks = new FieldChecks();
        if (Q is null)
        {
            checks.Add("q", "(missing)", "a mass ratio m1/m2 from 1 to 1000");
        }
        else
        {
            MassRatio.Check(checks, "q", Q.Value);
        }

        Spin.Check(checks, "chi1", Chi1X, Chi1Y, Chi1Z);
        Spin.Check(checks, "chi2", Chi2X, Chi2Y, Chi2Z);
        var omegaEnd = settings.EndOfInspiralOmega;
        switch (Omega0, Orbits)
        {
            case (null, null):
                checks.Add("omega0", "(missing)", "the initial orbital frequency M*omega0 (for example 0.018), or a number of orbits instead (--orbits N, or an orbits column)");
                break;
            case ({ }, { }):
                checks.Add("orbits", FieldProblem.Show(Orbits.Value), "either omega0 or orbits, not both");
                break;
            case ({ } omega, null):
                checks.InRange("omega0", omega, TaylorT4.MinimumOmega, omegaEnd * (1 - 1e-6),
                    $"M*omega0 must lie below the end of inspiral M*omega = {FieldProblem.Show(Math.Round(omegaEnd, 6))}");
                break;
            case (null, { } orbits):
                checks.InRange("orbits", orbits, 0.1, 10_000);
                break;
        }

        if (includeRunFields)
        {
            if (Levels.Count == 0)
            {
                checks.Add("level", "(missing)", $"at least one resolution level, an integer from 0 to {RunSpec.MaximumLevel}");
            }

            foreach (var level in Levels)
            {
                checks.InRange("level", level, 0, RunSpec.MaximumLevel);
            }

            if (Levels.Distinct().Count() != Levels.Count)
            {
                checks.Add("level", string.Join(",", Levels), "distinct resolution levels");
            }

            if (Cores is null)
            {
                checks.Add("cores", "(missing)", $"an integer from 1 to {RunSpec.MaximumCores}");
            }
            else
            {
                checks.InRange("cores", Cores.Value, 1, RunSpec.MaximumCores);
            }
        }

        return checks.Problems;
    }

    /// <summary>Builds the configuration, converting a target orbit count to M*omega0 with TaylorT4.</summary>
    /// <exception cref="InvalidInputException">When <see cref="Validate"/> reports problems.</exception>
    public BinaryConfiguration BuildConfiguration(LengthSettings settings)
    {
        ThrowIfInvalid(Validate(settings));
        var q = MassRatio.From(Q!.Value);
        var chi1 = Spin.From(Chi1X, Chi1Y, Chi1Z, "chi1");
        var chi2 = Spin.From(Chi2X, Chi2Y, Chi2Z, "chi2");
        var omega0 = Omega0 ?? OmegaForOrbits(q, Orbits!.Value, settings);
        return new BinaryConfiguration(q, chi1, chi2, omega0);
    }

    /// <summary>Builds the run specification (configuration, levels, cores).</summary>
    /// <exception cref="InvalidInputException">When <see cref="Validate"/> reports problems.</exception>
    public RunSpec BuildRunSpec(LengthSettings settings)
    {
        ThrowIfInvalid(Validate(settings, includeRunFields: true));
        var configuration = BuildConfiguration(settings);
        return new RunSpec(Name, configuration, Levels.Select(l => (int)l).ToArray(), (int)Cores!.Value);
    }

    private double OmegaForOrbits(MassRatio q, double orbits, LengthSettings settings)
    {
        var inspiral = new TaylorT4(q, Chi1Z, Chi2Z);
        var most = inspiral.Integrate(TaylorT4.MinimumOmega, settings.EndOfInspiralX).Orbits;
        if (orbits > most)
        {
            throw new InvalidInputException(new[]
            {
                new FieldProblem("orbits", FieldProblem.Show(orbits), $"at most {FieldProblem.Show(Math.Floor(most))} orbits for this binary (M*omega0 >= {FieldProblem.Show(TaylorT4.MinimumOmega)})").Message,
            });
        }

        return inspiral.OmegaForOrbits(orbits, settings.EndOfInspiralX);
    }

    private static void ThrowIfInvalid(IReadOnlyList<FieldProblem> problems)
    {
        if (problems.Count > 0)
        {
            throw new InvalidInputException(problems.Select(p => p.Message).ToList());
        }
    }
}
