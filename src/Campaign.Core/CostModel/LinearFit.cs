using MathNet.Numerics.LinearAlgebra;

namespace Campaign.Core.CostModel;

/// <summary>
/// Weighted least squares solved by Householder QR (never the normal equations), with optional prior
/// pseudo-observations (ridge toward given values). Columns are scaled to unit length before the
/// factorisation and the solution scaled back, which keeps ill-conditioned designs (such as NIST's Longley
/// data) accurate to the digits double precision allows.
/// Statistics follow the textbook OLS formulas: residual variance s^2 = sum w r^2 / (n - tr H) over the data
/// rows, covariance s^2 (X'WX + P)^-1, R^2 = 1 - RSS/TSS (weighted, about the weighted mean).
/// </summary>
public sealed class LinearFit
{
    private readonly Matrix<double> _unscaledCovariance;

    private LinearFit(Vector<double> coefficients, Matrix<double> unscaledCovariance, double residualVariance, double degreesOfFreedom, double rSquared, double[] leverage, double[] residuals)
    {
        Coefficients = coefficients;
        _unscaledCovariance = unscaledCovariance;
        ResidualVariance = residualVariance;
        DegreesOfFreedom = degreesOfFreedom;
        RSquared = rSquared;
        Leverage = leverage;
        Residuals = residuals;
    }

    /// <summary>Fitted coefficients, one per column.</summary>
    public Vector<double> Coefficients { get; }

    /// <summary>s^2, the residual variance.</summary>
    public double ResidualVariance { get; }

    /// <summary>s, the residual standard deviation.</summary>
    public double ResidualSd => Math.Sqrt(ResidualVariance);

    /// <summary>n - trace of the data part of the hat matrix (n - p without priors).</summary>
    public double DegreesOfFreedom { get; }

    /// <summary>Coefficient of determination.</summary>
    public double RSquared { get; }

    /// <summary>Leverage h_i of every data row (diagonal of the hat matrix).</summary>
    public IReadOnlyList<double> Leverage { get; }

    /// <summary>Residuals y_i - x_i'b of the data rows (unweighted).</summary>
    public IReadOnlyList<double> Residuals { get; }

    /// <summary>Covariance of the coefficients, s^2 (X'WX + P)^-1.</summary>
    public Matrix<double> Covariance => _unscaledCovariance * ResidualVariance;

    /// <summary>(X'WX + P)^-1, the covariance without the residual variance.</summary>
    public Matrix<double> UnscaledCovariance => _unscaledCovariance;

    /// <summary>Standard errors of the coefficients.</summary>
    public double[] StandardErrors => Enumerable.Range(0, Coefficients.Count).Select(i => Math.Sqrt(Covariance[i, i])).ToArray();

    /// <summary>x'b.</summary>
    public double Predict(IReadOnlyList<double> x) => Dot(x, Coefficients);

    /// <summary>h0 = x'(X'WX + P)^-1 x: the leverage a new point would have.</summary>
    public double LeverageOf(IReadOnlyList<double> x)
    {
        var v = Vector<double>.Build.DenseOfEnumerable(x);
        return v.DotProduct(_unscaledCovariance * v);
    }

    /// <summary>
    /// Fits y = X b by weighted least squares. <paramref name="weights"/> (default all 1) multiply each row's
    /// squared residual. <paramref name="priorMeans"/> and <paramref name="priorPrecisions"/> add, for each column j
    /// with a precision above 0, a pseudo-observation b_j = mean_j with weight precision_j.
    /// </summary>
    public static LinearFit Solve(Matrix<double> x, Vector<double> y, IReadOnlyList<double>? weights = null, IReadOnlyList<double>? priorMeans = null, IReadOnlyList<double>? priorPrecisions = null)
    {
        var n = x.RowCount;
        var p = x.ColumnCount;
        if (y.Count != n)
        {
            throw new ArgumentException($"y has {y.Count} values for {n} rows.", nameof(y));
        }

        var priorColumns = priorPrecisions is null ? Array.Empty<int>() : Enumerable.Range(0, p).Where(j => priorPrecisions[j] > 0).ToArray();
        if (n + priorColumns.Length < p)
        {
            throw new ArgumentException($"{n} rows cannot determine {p} coefficients.", nameof(x));
        }

        var rows = n + priorColumns.Length;
        var a = Matrix<double>.Build.Dense(rows, p);
        var b = Vector<double>.Build.Dense(rows);
        for (var i = 0; i < n; i++)
        {
            var root = Math.Sqrt(weights?[i] ?? 1.0);
            for (var j = 0; j < p; j++)
            {
                a[i, j] = root * x[i, j];
            }

            b[i] = root * y[i];
        }

        for (var k = 0; k < priorColumns.Length; k++)
        {
            var j = priorColumns[k];
            var root = Math.Sqrt(priorPrecisions![j]);
            a[n + k, j] = root;
            b[n + k] = root * priorMeans![j];
        }

        // Equilibrate: scale each column to unit Euclidean length.
        var scale = new double[p];
        for (var j = 0; j < p; j++)
        {
            var norm = a.Column(j).L2Norm();
            if (norm == 0)
            {
                throw new ArgumentException($"Column {j} is all zeros; its coefficient cannot be determined.", nameof(x));
            }

            scale[j] = norm;
            for (var i = 0; i < rows; i++)
            {
                a[i, j] /= norm;
            }
        }

        var qr = a.QR(MathNet.Numerics.LinearAlgebra.Factorization.QRMethod.Thin);
        var r = qr.R;
        for (var j = 0; j < p; j++)
        {
            if (Math.Abs(r[j, j]) < 1e-13 * Math.Abs(r[0, 0]))
            {
                throw new ArgumentException($"The design is rank-deficient at column {j}: a feature is a combination of others.", nameof(x));
            }
        }

        var scaledBeta = qr.Solve(b);
        var rInverse = r.Inverse();
        var scaledCovariance = rInverse * rInverse.Transpose();
        var beta = Vector<double>.Build.Dense(p, j => scaledBeta[j] / scale[j]);
        var covariance = Matrix<double>.Build.Dense(p, p, (i, j) => scaledCovariance[i, j] / (scale[i] * scale[j]));

        var q = qr.Q;
        var leverage = new double[n];
        var residuals = new double[n];
        double weightedRss = 0, sumW = 0, sumWy = 0;
        for (var i = 0; i < n; i++)
        {
            var h = 0.0;
            for (var j = 0; j < p; j++)
            {
                h += q[i, j] * q[i, j];
            }

            leverage[i] = h;
            residuals[i] = y[i] - Dot(x.Row(i), beta);
            var w = weights?[i] ?? 1.0;
            weightedRss += w * residuals[i] * residuals[i];
            sumW += w;
            sumWy += w * y[i];
        }

        var mean = sumW > 0 ? sumWy / sumW : 0;
        var tss = 0.0;
        for (var i = 0; i < n; i++)
        {
            var d = y[i] - mean;
            tss += (weights?[i] ?? 1.0) * d * d;
        }

        var dof = Math.Max(n - leverage.Sum(), 1e-9);
        var variance = weightedRss / dof;
        var rSquared = tss > 0 ? 1 - weightedRss / tss : 0;
        return new LinearFit(beta, covariance, variance, dof, rSquared, leverage, residuals);
    }

    private static double Dot(IReadOnlyList<double> x, Vector<double> beta)
    {
        var sum = 0.0;
        for (var j = 0; j < beta.Count; j++)
        {
            sum += x[j] * beta[j];
        }

        return sum;
    }

    private static double Dot(Vector<double> x, Vector<double> beta) => x.DotProduct(beta);
}
