namespace Campaign.Core.Domain;

/// <summary>
/// The physics of one planned simulation: mass ratio, both spins and the initial orbital frequency
/// M*omega0 that sets its length. Immutable; build it with <see cref="BinaryConfigurationDraft"/>.
/// </summary>
public sealed record BinaryConfiguration(MassRatio Q, Spin Chi1, Spin Chi2, double Omega0)
{
    /// <summary>Effective spin chi_eff = (m1 chi1z + m2 chi2z)/M.</summary>
    public double ChiEffective => Q.Mass1 * Chi1.Z + Q.Mass2 * Chi2.Z;

    /// <summary>True when neither spin has an in-plane component (the orbit does not precess).</summary>
    public bool IsAligned => Chi1.IsAligned && Chi2.IsAligned;
}
