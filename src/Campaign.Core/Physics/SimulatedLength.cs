using Campaign.Core.Domain;

namespace Campaign.Core.Physics;

/// <summary>
/// Breakdown of how long (in simulated time, units of M) one configuration must be evolved.
/// </summary>
/// <param name="Inspiral">TaylorT4 inspiral from M*omega0 to the end of inspiral.</param>
/// <param name="Merger">Allowance from the end of inspiral to the waveform peak.</param>
/// <param name="PostPeak">Evolution after the peak: max(minimum, e-folds x damping time).</param>
/// <param name="ExtractionTravel">Time for the signal to reach the outermost extraction radius (tortoise radius).</param>
/// <param name="Remnant">Remnant mass and spin.</param>
/// <param name="Ringdown">Fundamental quasinormal mode of the remnant.</param>
/// <param name="LeadingOrderTime">Peters' leading-order time to coalescence from omega0, for comparison.</param>
public sealed record SimulatedLength(
    Inspiral Inspiral,
    double Merger,
    double PostPeak,
    double ExtractionTravel,
    Remnant Remnant,
    QuasinormalMode Ringdown,
    double LeadingOrderTime)
{
    /// <summary>Total simulated time T/M = inspiral + merger + post-peak + extraction travel.</summary>
    public double Total => Inspiral.Time + Merger + PostPeak + ExtractionTravel;

    /// <summary>Damping time of the fundamental mode in units of the total mass M.</summary>
    public double DampingTime => Ringdown.DampingTime * Remnant.Mass;

    /// <summary>
    /// Estimates the simulated length of a configuration:
    /// T/M = T_inspiral(TaylorT4, omega0 to x_end) + merger allowance
    /// + max(minimum post-peak, e-folds x tau_220 M_f) + r*(R_extraction),
    /// with r*(R) = R + 2 ln(R/2 - 1) the Schwarzschild tortoise radius of a hole of mass M.
    /// </summary>
    public static SimulatedLength Estimate(BinaryConfiguration configuration, LengthSettings settings)
    {
        var inspiral = new TaylorT4(configuration.Q, configuration.Chi1.Z, configuration.Chi2.Z)
            .Integrate(configuration.Omega0, settings.EndOfInspiralX);
        var remnant = RemnantFit.Estimate(configuration.Q, configuration.Chi1, configuration.Chi2);
        var mode = QuasinormalMode.Fundamental(remnant.Spin);
        var postPeak = Math.Max(settings.MinimumPostPeak, settings.RingdownEFolds * mode.DampingTime * remnant.Mass);
        var radius = settings.ExtractionRadius;
        var travel = radius + 2 * Math.Log(radius / 2 - 1);
        var peters = Peters.TimeToCoalescence(configuration.Q.SymmetricMassRatio, configuration.Omega0);
        return new SimulatedLength(inspiral, settings.MergerAllowance, postPeak, travel, remnant, mode, peters);
    }
}
