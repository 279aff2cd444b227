using Campaign.Core.Domain;
using Campaign.Core.Physics;

namespace Campaign.Core.Tests.Physics;

public class TaylorT4Tests
{
    private const double IscoX = 1.0 / 6.0;

    // Values computed from the TaylorT4 formulas of Blanchet, Living Rev. Relativ. 17, 2 (2014) and
    // Boyle et al., Phys. Rev. D 76, 124038 (2007), with Kidder's spin-orbit term (Phys. Rev. D 52, 821 (1995)),
    // as listed in the project's reference sheet (a computed check, not a published table).
    [Fact]
    public void Rate_at_x_0_1_equal_mass_matches_the_reference_value()
    {
        var rate = new TaylorT4(MassRatio.From(1), 0, 0).XDot(0.1);
        Assert.Equal(3.70657416760038e-5, rate, 1e-17);
    }

    [Fact]
    public void Rate_at_x_0_1_with_aligned_spins_matches_the_reference_value()
    {
        var rate = new TaylorT4(MassRatio.From(1), 0.5, 0.5).XDot(0.1);
        Assert.Equal(3.31023536752594e-5, rate, 1e-17);
    }

    [Fact]
    public void The_2_5PN_eta_term_has_the_negative_sign()
    {
        // Reference sheet: a5 = -(4159/672 + 189 eta/8) pi; a plus sign on the eta term is a known slip.
        // With the slip, dx/dt at x = 0.1, q = 1 would differ from the reference value by more than 1e-7.
        var rate = new TaylorT4(MassRatio.From(1), 0, 0).XDot(0.1);
        var eta = 0.25;
        var x = 0.1;
        var slipDifference = 64.0 / 5.0 * eta * Math.Pow(x, 5) * 2 * (189.0 / 8.0 * eta) * Math.PI * Math.Pow(x, 2.5);
        Assert.True(slipDifference > 1e-7);
        Assert.Equal(3.70657416760038e-5, rate, 1e-15);
    }

    [Theory]
    [InlineData(1, 0, 16279.65, 39.061)]
    [InlineData(4, 0, 24937.87, 59.644)]
    [InlineData(10, 0, 47468.51, 113.227)]
    [InlineData(1, 0.5, 17261.13, 41.80)]
    public void Inspiral_from_0_01_to_the_isco_matches_the_reference_values(double q, double chi, double time, double orbits)
    {
        var inspiral = new TaylorT4(MassRatio.From(q), chi, chi).Integrate(0.01, IscoX);
        Assert.Equal(time, inspiral.Time, 0.01);
        Assert.Equal(orbits, inspiral.Orbits, orbits == 41.80 ? 0.01 : 0.001);
    }

    [Theory]
    [InlineData(1, 0, 10)]
    [InlineData(3, 0.6, 25)]
    [InlineData(8, -0.4, 60)]
    public void Omega_for_orbits_inverts_the_orbit_count(double q, double chi, double orbits)
    {
        var t4 = new TaylorT4(MassRatio.From(q), chi, 0);
        var omega = t4.OmegaForOrbits(orbits, IscoX);
        Assert.Equal(orbits, t4.Integrate(omega, IscoX).Orbits, 1e-7);
    }

    [Fact]
    public void Inspiral_agrees_with_Peters_at_low_frequency()
    {
        // At M omega = 1e-3 (x = 0.01) higher PN orders change the time by a few per cent at most.
        var eta = 0.25;
        var t4 = new TaylorT4(MassRatio.From(1), 0, 0).Integrate(1e-3, IscoX).Time;
        var peters = Peters.TimeToCoalescence(eta, 1e-3);
        Assert.InRange(t4 / peters, 0.95, 1.05);
    }

    [Fact]
    public void Omega_above_the_end_of_inspiral_is_refused()
    {
        var t4 = new TaylorT4(MassRatio.From(1), 0, 0);
        Assert.Throws<ArgumentOutOfRangeException>(() => t4.Integrate(0.07, IscoX));
    }
}
