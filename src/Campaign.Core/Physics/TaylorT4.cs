using Campaign.Core.Domain;
using MathNet.Numerics.Integration;
using MathNet.Numerics.RootFinding;

namespace Campaign.Core.Physics;

/// <summary>
/// TaylorT4 post-Newtonian inspiral: dx/dt as a 3.5PN Taylor expansion in x = (M omega)^(2/3),
/// integrated numerically. Non-spinning coefficients from the 3PN energy and 3.5PN flux in
/// L. Blanchet, Living Rev. Relativ. 17, 2 (2014); the TaylorT4 form as in Boyle et al.,
/// Phys. Rev. D 76, 124038 (2007). Leading (1.5PN) spin-orbit term from L. Kidder,
/// Phys. Rev. D 52, 821 (1995).
/// Approximation for spins: only the components along the orbital angular momentum (chi_z) enter;
/// in-plane components are neglected for the length (their leading spin-orbit effect averages out
/// over a precession cycle), and spin-spin and higher spin terms are left out.
/// Units G = c = M = 1.
/// </summary>
public sealed class TaylorT4
{
    /// <summary>Euler-Mascheroni constant.</summary>
    private const double EulerGamma = 0.57721566490153286061;

    private const int BreakdownSamples = 256;

    private readonly double _eta;
    private readonly double _a2;
    private readonly double _a3;
    private readonly double _a4;
    private readonly double _a5;
    private readonly double _a6Constant;
    private readonly double _a7;

    /// <summary>Sets up the expansion for a binary of mass ratio q and aligned spin components chi1z, chi2z.</summary>
    public TaylorT4(MassRatio q, double chi1z, double chi2z)
    {
        var eta = q.SymmetricMassRatio;
        var pi = Math.PI;
        _eta = eta;
        _a2 = -743.0 / 336.0 - 11.0 / 4.0 * eta;
        _a3 = 4 * pi - SpinOrbitBeta(q, chi1z, chi2z);
        _a4 = 34103.0 / 18144.0 + 13661.0 / 2016.0 * eta + 59.0 / 18.0 * eta * eta;
        _a5 = -(4159.0 / 672.0 + 189.0 / 8.0 * eta) * pi;
        _a6Constant = 16447322263.0 / 139708800.0 - 1712.0 / 105.0 * EulerGamma + 16.0 / 3.0 * pi * pi
            + (-56198689.0 / 217728.0 + 451.0 / 48.0 * pi * pi) * eta
            + 541.0 / 896.0 * eta * eta - 5605.0 / 2592.0 * eta * eta * eta;
        _a7 = (-4415.0 / 4032.0 + 358675.0 / 6048.0 * eta + 91495.0 / 1512.0 * eta * eta) * pi;
    }

    /// <summary>
    /// Kidder's spin-orbit coefficient beta = sum_i chi_i (113 m_i^2/M^2 + 75 eta)/12, which replaces
    /// 4 pi by 4 pi - beta at 1.5PN.
    /// </summary>
    public static double SpinOrbitBeta(MassRatio q, double chi1z, double chi2z)
    {
        var eta = q.SymmetricMassRatio;
        var m1 = q.Mass1;
        var m2 = q.Mass2;
        return (chi1z * (113 * m1 * m1 + 75 * eta) + chi2z * (113 * m2 * m2 + 75 * eta)) / 12.0;
    }

    /// <summary>dx/dt in units of 1/M at the given x.</summary>
    public double XDot(double x)
    {
        var sqrtX = Math.Sqrt(x);
        var a6 = _a6Constant - 856.0 / 105.0 * Math.Log(16 * x);
        var series = 1 + x * (_a2 + sqrtX * (_a3 + sqrtX * (_a4 + sqrtX * (_a5 + sqrtX * (a6 + sqrtX * _a7)))));
        var x5 = x * x * x * x * x;
        return 64.0 / 5.0 * _eta * x5 * series;
    }

    /// <summary>
    /// Inspiral from orbital frequency <paramref name="omega0"/> to x = <paramref name="xEnd"/>: elapsed time (M)
    /// and orbits, N = (1/2 pi) integral of omega dt. Throws when dx/dt stops being positive inside the range,
    /// which means the PN series has broken down for this configuration (<see cref="InvalidInputException"/>).
    /// </summary>
    public Inspiral Integrate(double omega0, double xEnd)
    {
        var x0 = Math.Pow(omega0, 2.0 / 3.0);
        if (!(x0 < xEnd))
        {
            throw new ArgumentOutOfRangeException(nameof(omega0), omega0, $"M*omega0 must be below the end of inspiral M*omega = {FieldProblem.Show(Math.Pow(xEnd, 1.5))}.");
        }

        CheckRateIsPositive(x0, xEnd);
        var s0 = Math.Log(x0);
        var s1 = Math.Log(xEnd);
        // Integrate over s = ln x: dt = dx / xdot = x ds / xdot, which keeps the integrand smooth.
        var time = GaussKronrodRule.Integrate(s => Math.Exp(s) / XDot(Math.Exp(s)), s0, s1, out _, out _, 1e-12, 30, 21);
        var phase = GaussKronrodRule.Integrate(
            s =>
            {
                var x = Math.Exp(s);
                return x * Math.Pow(x, 1.5) / XDot(x);
            },
            s0,
            s1,
            out _,
            out _,
            1e-12,
            30,
            21);
        return new Inspiral(time, phase / (2 * Math.PI));
    }

    /// <summary>
    /// The initial orbital frequency M*omega0 whose inspiral to <paramref name="xEnd"/> lasts
    /// <paramref name="orbits"/> orbits (the inverse of <see cref="Integrate"/>), found with Brent's method.
    /// </summary>
    public double OmegaForOrbits(double orbits, double xEnd)
    {
        var omegaEnd = Math.Pow(xEnd, 1.5);
        var low = MinimumOmega;
        var high = omegaEnd * (1 - 1e-9);
        var most = Integrate(low, xEnd).Orbits;
        if (!(orbits > 0 && orbits <= most))
        {
            throw new ArgumentOutOfRangeException(nameof(orbits), orbits, $"orbits must be greater than 0 and at most {FieldProblem.Show(Math.Floor(most))} for this binary.");
        }

        double Residual(double logOmega) => Integrate(Math.Exp(logOmega), xEnd).Orbits - orbits;
        var logOmega = Brent.FindRoot(Residual, Math.Log(low), Math.Log(high), 1e-13, 200);
        return Math.Exp(logOmega);
    }

    /// <summary>Lowest initial frequency the integrator accepts (about 10^8 M before merger at q = 1).</summary>
    public const double MinimumOmega = 1e-4;

    private void CheckRateIsPositive(double x0, double xEnd)
    {
        var step = (Math.Log(xEnd) - Math.Log(x0)) / BreakdownSamples;
        for (var i = 0; i <= BreakdownSamples; i++)
        {
            var x = Math.Exp(Math.Log(x0) + i * step);
            var rate = XDot(x);
            if (!(rate > 0) || !double.IsFinite(rate))
            {
                throw new InvalidInputException(new[]
                {
                    $"TaylorT4 dx/dt is not positive at x = {FieldProblem.Show(x)} (M*omega = {FieldProblem.Show(Math.Pow(x, 1.5))}): the post-Newtonian series breaks down before x_end = {FieldProblem.Show(xEnd)} for this configuration; lower end_of_inspiral_x in [length].",
                });
            }
        }
    }
}

/// <summary>Result of a post-Newtonian inspiral: elapsed time in M and number of orbits.</summary>
public readonly record struct Inspiral(double Time, double Orbits);
