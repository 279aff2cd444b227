using Campaign.Core.CostModel;
using MathNet.Numerics.LinearAlgebra;

namespace Campaign.Core.Tests.CostModel;

/// <summary>
/// Source: NIST Information Technology Laboratory, Statistical Reference Datasets (StRD), Linear Least Squares
/// Regression, "Norris" (lower difficulty) and "Longley" (higher difficulty, ill-conditioned) pages. Data and
/// certified values are public domain; the data below are copied from those pages.
/// </summary>
public class NistStrdTests
{
    // Norris: y, x (36 observations).
    private static readonly double[,] Norris =
    {
        { 0.1, 0.2 },
        { 338.8, 337.4 },
        { 118.1, 118.2 },
        { 888.0, 884.6 },
        { 9.2, 10.1 },
        { 228.1, 226.5 },
        { 668.5, 666.3 },
        { 998.5, 996.3 },
        { 449.1, 448.6 },
        { 778.9, 777.0 },
        { 559.2, 558.2 },
        { 0.3, 0.4 },
        { 0.1, 0.6 },
        { 778.1, 775.5 },
        { 668.8, 666.9 },
        { 339.3, 338.0 },
        { 448.9, 447.5 },
        { 10.8, 11.6 },
        { 557.7, 556.0 },
        { 228.3, 228.1 },
        { 998.0, 995.8 },
        { 888.8, 887.6 },
        { 119.6, 120.2 },
        { 0.3, 0.3 },
        { 0.6, 0.3 },
        { 557.6, 556.8 },
        { 339.3, 339.1 },
        { 888.0, 887.2 },
        { 998.5, 999.0 },
        { 778.9, 779.0 },
        { 10.2, 11.1 },
        { 117.6, 118.3 },
        { 228.9, 229.2 },
        { 668.4, 669.1 },
        { 449.2, 448.9 },
        { 0.2, 0.5 },
    };

    // Longley: y, x1 ... x6 (16 observations).
    private static readonly double[,] Longley =
    {
        { 60323, 83, 234289, 2356, 1590, 107608, 1947 },
        { 61122, 88.5, 259426, 2325, 1456, 108632, 1948 },
        { 60171, 88.2, 258054, 3682, 1616, 109773, 1949 },
        { 61187, 89.5, 284599, 3351, 1650, 110929, 1950 },
        { 63221, 96.2, 328975, 2099, 3099, 112075, 1951 },
        { 63639, 98.1, 346999, 1932, 3594, 113270, 1952 },
        { 64989, 99, 365385, 1870, 3547, 115094, 1953 },
        { 63761, 100, 363112, 3578, 3350, 116219, 1954 },
        { 66019, 101.2, 397469, 2904, 3048, 117388, 1955 },
        { 67857, 104.6, 419180, 2822, 2857, 118734, 1956 },
        { 68169, 108.4, 442769, 2936, 2798, 120445, 1957 },
        { 66513, 110.8, 444546, 4681, 2637, 121950, 1958 },
        { 68655, 112.6, 482704, 3813, 2552, 123366, 1959 },
        { 69564, 114.2, 502601, 3931, 2514, 125368, 1960 },
        { 69331, 115.7, 518173, 4806, 2572, 127852, 1961 },
        { 70551, 116.9, 554894, 4007, 2827, 130081, 1962 },
    };

    private static (Matrix<double> X, Vector<double> Y) Design(double[,] data)
    {
        var n = data.GetLength(0);
        var p = data.GetLength(1);
        var x = Matrix<double>.Build.Dense(n, p, (i, j) => j == 0 ? 1.0 : data[i, j]);
        var y = Vector<double>.Build.Dense(n, i => data[i, 0]);
        return (x, y);
    }

    private static void AssertSignificant(double expected, double actual, int digits)
    {
        var relative = Math.Abs(actual - expected) / Math.Abs(expected);
        Assert.True(relative < Math.Pow(10, -digits), $"expected {expected:R}, got {actual:R} (relative error {relative:E2}, wanted below 1e-{digits})");
    }

    [Fact]
    public void Norris_matches_the_certified_values_to_nine_digits()
    {
        var (x, y) = Design(Norris);
        var fit = LinearFit.Solve(x, y);
        // NIST certified values (Norris).
        AssertSignificant(-0.262323073774029, fit.Coefficients[0], 9);
        AssertSignificant(1.00211681802045, fit.Coefficients[1], 9);
        AssertSignificant(0.232818234301152, fit.StandardErrors[0], 9);
        AssertSignificant(4.29796848199937E-04, fit.StandardErrors[1], 9);
        AssertSignificant(0.884796396144373, fit.ResidualSd, 9);
        AssertSignificant(0.999993745883712, fit.RSquared, 9);
    }

    [Fact]
    public void Longley_matches_the_certified_values_to_seven_digits()
    {
        var (x, y) = Design(Longley);
        var fit = LinearFit.Solve(x, y);
        // NIST certified values (Longley).
        double[] b = { -3482258.63459582, 15.0618722713733, -0.358191792925910E-01, -2.02022980381683, -1.03322686717359, -0.511041056535807E-01, 1829.15146461355 };
        double[] se = { 890420.383607373, 84.9149257747669, 0.334910077722432E-01, 0.488399681651699, 0.214274163161675, 0.226073200069370, 455.478499142212 };
        for (var j = 0; j < b.Length; j++)
        {
            AssertSignificant(b[j], fit.Coefficients[j], 7);
            AssertSignificant(se[j], fit.StandardErrors[j], 7);
        }

        AssertSignificant(304.854073561965, fit.ResidualSd, 7);
        AssertSignificant(0.995479004577296, fit.RSquared, 7);
    }

    [Fact]
    public void Norris_prediction_interval_at_500_matches_the_textbook_formula()
    {
        // Derived in the project's reference sheet from the certified Norris fit with the textbook OLS
        // prediction interval yhat +- t(0.975, n-p) s sqrt(1 + h0): yhat = 500.796085936453,
        // h0 = 0.0293191280279283, 95% PI = [498.971794054183, 502.620377818723].
        var (x, y) = Design(Norris);
        var fit = LinearFit.Solve(x, y);
        var x0 = new[] { 1.0, 500.0 };
        var interval = PredictionInterval.Of(fit, x0, 0.95);
        AssertSignificant(500.796085936453, interval.Center, 9);
        AssertSignificant(0.0293191280279283, fit.LeverageOf(x0), 7);
        AssertSignificant(498.971794054183, interval.Low, 9);
        AssertSignificant(502.620377818723, interval.High, 9);
    }
}
