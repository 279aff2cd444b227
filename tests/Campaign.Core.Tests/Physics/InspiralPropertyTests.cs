using Campaign.Core.Domain;
using Campaign.Core.Physics;

namespace Campaign.Core.Tests.Physics;

/// <summary>Monotonicity properties of the inspiral, checked over seeded random grids of configurations.</summary>
public class InspiralPropertyTests
{
    private const double IscoX = 1.0 / 6.0;

    public static TheoryData<int> Seeds => new() { 1, 2, 3, 4, 5 };

    [Theory]
    [MemberData(nameof(Seeds))]
    public void Time_and_orbits_decrease_as_omega0_rises(int seed)
    {
        var random = new Random(seed);
        var q = MassRatio.From(1 + 9 * random.NextDouble());
        var chi1 = 1.6 * random.NextDouble() - 0.8;
        var chi2 = 1.6 * random.NextDouble() - 0.8;
        var t4 = new TaylorT4(q, chi1, chi2);
        var previous = new Inspiral(double.PositiveInfinity, double.PositiveInfinity);
        foreach (var omega in new[] { 0.004, 0.006, 0.01, 0.015, 0.02, 0.03, 0.045 })
        {
            var inspiral = t4.Integrate(omega, IscoX);
            Assert.True(inspiral.Time < previous.Time, $"time did not fall at omega0 = {omega} (q = {q}, chi = {chi1}, {chi2})");
            Assert.True(inspiral.Orbits < previous.Orbits, $"orbits did not fall at omega0 = {omega}");
            previous = inspiral;
        }
    }

    [Theory]
    [MemberData(nameof(Seeds))]
    public void Time_and_orbits_grow_with_q_at_fixed_omega0(int seed)
    {
        var random = new Random(seed);
        var omega = 0.008 + 0.02 * random.NextDouble();
        var previous = new Inspiral(0, 0);
        foreach (var q in new[] { 1.0, 1.5, 2, 3, 5, 8, 12, 20 })
        {
            var inspiral = new TaylorT4(MassRatio.From(q), 0, 0).Integrate(omega, IscoX);
            Assert.True(inspiral.Time > previous.Time, $"time did not grow at q = {q}, omega0 = {omega}");
            Assert.True(inspiral.Orbits > previous.Orbits, $"orbits did not grow at q = {q}");
            previous = inspiral;
        }
    }

    [Theory]
    [MemberData(nameof(Seeds))]
    public void Positive_aligned_spin_lengthens_the_inspiral(int seed)
    {
        var random = new Random(seed);
        var q = MassRatio.From(1 + 9 * random.NextDouble());
        var omega = 0.008 + 0.02 * random.NextDouble();
        var previous = new Inspiral(0, 0);
        foreach (var chi in new[] { -0.9, -0.5, 0, 0.3, 0.6, 0.9 })
        {
            var inspiral = new TaylorT4(q, chi, chi).Integrate(omega, IscoX);
            Assert.True(inspiral.Time > previous.Time, $"time did not grow at chi = {chi}, q = {q}");
            Assert.True(inspiral.Orbits > previous.Orbits, $"orbits did not grow at chi = {chi}");
            previous = inspiral;
        }
    }
}
