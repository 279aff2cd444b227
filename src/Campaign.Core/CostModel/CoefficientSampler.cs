using MathNet.Numerics.Distributions;
using MathNet.Numerics.LinearAlgebra;

namespace Campaign.Core.CostModel;

/// <summary>
/// Draws of a fitted model's coefficients, b ~ N(b_hat, s^2 (X'WX + P)^-1) (the sampling distribution of the
/// least-squares estimate), through the Cholesky factor of that covariance: the one draw the estimate's totals
/// and the forecast share, so that every run in one draw moves with the same coefficients.
/// </summary>
public sealed class CoefficientSampler
{
    private readonly Matrix<double> _cholesky;
    private readonly double[] _beta;

    /// <summary>Prepares the draws of <paramref name="model"/>'s coefficients.</summary>
    public CoefficientSampler(FittedCostModel model)
    {
        var p = model.Coefficients.Length;
        _beta = model.Coefficients.ToArray();
        _cholesky = Matrix<double>.Build.Dense(p, p, (i, j) => model.UnscaledCovariance[i][j] * model.ResidualSd * model.ResidualSd).Cholesky().Factor;
    }

    /// <summary>Number of coefficients.</summary>
    public int Count => _beta.Length;

    /// <summary>One draw, using <see cref="Count"/> standard normals from <paramref name="random"/> in order.</summary>
    public double[] Draw(Random random)
    {
        var z = Vector<double>.Build.Dense(_beta.Length, _ => Normal.Sample(random, 0, 1));
        var shift = _cholesky * z;
        var b = new double[_beta.Length];
        for (var k = 0; k < b.Length; k++)
        {
            b[k] = _beta[k] + shift[k];
        }

        return b;
    }
}
