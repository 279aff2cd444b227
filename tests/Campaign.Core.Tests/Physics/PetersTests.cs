using Campaign.Core.Physics;

namespace Campaign.Core.Tests.Physics;

public class PetersTests
{
    // Source: P. C. Peters, Phys. Rev. 136, B1224 (1964); closed-form check values as listed in the
    // project's reference sheet (equal mass, eta = 1/4).
    [Theory]
    [InlineData(0.01, 16831.5210159)]
    [InlineData(0.02, 2650.79845371)]
    public void Time_to_coalescence_matches_the_closed_form(double omega, double expected)
    {
        Assert.Equal(expected, Peters.TimeToCoalescence(0.25, omega), 6);
    }

    [Fact]
    public void Orbits_to_coalescence_from_0_01_match_the_closed_form()
    {
        // Source: Peters (1964), N = (M omega0)^(-5/3) / (64 pi eta); 42.8611163109 at eta = 1/4.
        Assert.Equal(42.8611163109, Peters.Orbits(0.25, 0.01, double.PositiveInfinity), 9);
    }
}
