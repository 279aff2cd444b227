using MathNet.Numerics.Distributions;

namespace Campaign.Core.CostModel;

/// <summary>
/// A central prediction interval for a new observation at x0 (not a confidence interval for the mean):
/// yhat +- t((1 + level)/2, dof) s sqrt(1 + h0), with h0 = x0'(X'X)^-1 x0.
/// </summary>
public readonly record struct PredictionInterval(double Center, double Low, double High, double StandardError)
{
    /// <summary>The interval from a fit at <paramref name="x"/> for a central probability <paramref name="level"/>.</summary>
    public static PredictionInterval Of(LinearFit fit, IReadOnlyList<double> x, double level)
    {
        var center = fit.Predict(x);
        var se = fit.ResidualSd * Math.Sqrt(1 + fit.LeverageOf(x));
        var t = StudentTQuantile((1 + level) / 2, fit.DegreesOfFreedom);
        return new PredictionInterval(center, center - t * se, center + t * se, se);
    }

    /// <summary>The p quantile of Student's t distribution with <paramref name="degreesOfFreedom"/> degrees of freedom.</summary>
    public static double StudentTQuantile(double p, double degreesOfFreedom) =>
        StudentT.InvCDF(0, 1, degreesOfFreedom, p);
}
