using Campaign.Core.Domain;
using Campaign.Core.Physics;

namespace Campaign.Core.Tests.Physics;

public class RemnantTests
{
    // Source: Y. Pan et al., Phys. Rev. D 84, 124052 (2011), Eq. 29; values from the project's reference sheet.
    [Theory]
    [InlineData(1, 0.951759, 0.687025)]
    [InlineData(4, 0.977958, 0.471657)]
    [InlineData(10, 0.992066, 0.262124)]
    public void Non_spinning_remnant_matches_Pan_et_al(double q, double mass, double spin)
    {
        var remnant = RemnantFit.Estimate(MassRatio.From(q), Spin.Zero, Spin.Zero);
        Assert.Equal(mass, remnant.Mass, 6);
        Assert.Equal(spin, remnant.Spin, 6);
    }

    [Fact]
    public void Aligned_spins_raise_the_remnant_spin_and_the_radiated_energy()
    {
        // Expected from the field (Barausse and Rezzolla 2009; hang-up of aligned spins): both monotone in chi.
        var q = MassRatio.From(2);
        var down = RemnantFit.Estimate(q, Spin.Aligned(-0.8), Spin.Aligned(-0.8));
        var none = RemnantFit.Estimate(q, Spin.Zero, Spin.Zero);
        var up = RemnantFit.Estimate(q, Spin.Aligned(0.8), Spin.Aligned(0.8));
        Assert.True(down.Spin < none.Spin && none.Spin < up.Spin);
        Assert.True(down.Mass > none.Mass && none.Mass > up.Mass);
    }

    [Fact]
    public void Test_mass_limit_keeps_the_big_hole_spin()
    {
        // As q grows the remnant tends to the heavier hole: its spin and nearly all the mass.
        var remnant = RemnantFit.Estimate(MassRatio.From(1000), Spin.Aligned(0.7), Spin.Zero);
        Assert.Equal(0.7, remnant.Spin, 2);
        Assert.Equal(1.0, remnant.Mass, 3);
    }

    // Source: Bardeen, Press and Teukolsky, Astrophys. J. 178, 347 (1972): r_isco = 6, 1 and 9 for a = 0, 1, -1.
    [Theory]
    [InlineData(0, 6)]
    [InlineData(1, 1)]
    [InlineData(-1, 9)]
    public void Kerr_isco_radius_matches_the_textbook_limits(double a, double radius)
    {
        Assert.Equal(radius, KerrIsco.Radius(a), 9);
    }

    // Source: Berti, Cardoso and Will, Phys. Rev. D 73, 064030 (2006) fit; values from the project's reference sheet.
    [Theory]
    [InlineData(0, 11.51)]
    [InlineData(0.686, 12.21)]
    [InlineData(0.9, 15.54)]
    public void Quasinormal_damping_time_matches_the_fit(double spin, double tau)
    {
        Assert.Equal(tau, QuasinormalMode.Fundamental(spin).DampingTime, 2);
    }
}
