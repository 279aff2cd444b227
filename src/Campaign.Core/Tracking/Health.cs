namespace Campaign.Core.Tracking;

/// <summary>Signs that a run is going bad, from its progress reports.</summary>
public static class Health
{
    /// <summary>
    /// The exponential growth rate (per M) of the constraint norm over the last <paramref name="window"/> reports
    /// that carry a positive norm: the least-squares slope of ln(norm) against t, with its R^2. Null with fewer
    /// than three such reports or no spread in t.
    /// </summary>
    public static (double Rate, double RSquared)? NormGrowthRate(IReadOnlyList<ProgressPoint> points, int window)
    {
        var recent = points.Where(p => p.Norm is > 0 && double.IsFinite(p.Norm.Value)).TakeLast(window).ToList();
        if (recent.Count < 3)
        {
            return null;
        }

        var n = recent.Count;
        var meanT = recent.Average(p => p.Time);
        var meanY = recent.Average(p => Math.Log(p.Norm!.Value));
        double sxx = 0, sxy = 0, syy = 0;
        foreach (var p in recent)
        {
            var dx = p.Time - meanT;
            var dy = Math.Log(p.Norm!.Value) - meanY;
            sxx += dx * dx;
            sxy += dx * dy;
            syy += dy * dy;
        }

        if (sxx <= 0)
        {
            return null;
        }

        var slope = sxy / sxx;
        var r2 = syy > 0 ? sxy * sxy / (sxx * syy) : 1;
        _ = n;
        return (slope, r2);
    }

    /// <summary>The first report whose constraint norm is not finite (NaN or infinite), or null: a run gone bad.</summary>
    public static ProgressPoint? FirstNonFinite(IReadOnlyList<ProgressPoint> points) =>
        points.Where(p => p.Norm is { } n && !double.IsFinite(n)).Select(p => (ProgressPoint?)p).FirstOrDefault();

    /// <summary>Why a run is held for a non-finite norm.</summary>
    public static string NonFiniteReason(ProgressPoint point) =>
        $"constraint norm not finite ({(double.IsNaN(point.Norm!.Value) ? "nan" : "inf")} at t = {point.Time.ToString("0.#", System.Globalization.CultureInfo.InvariantCulture)} M): the run has gone bad";

    /// <summary>
    /// True when the norm grows steadily: growth rate above <paramref name="limit"/> per M with R^2 of at least
    /// 0.8 over the window (a steady exponential, not noise).
    /// </summary>
    public static bool IsGoingBad(IReadOnlyList<ProgressPoint> points, int window, double limit, out double rate)
    {
        rate = 0;
        if (NormGrowthRate(points, window) is not { } fit)
        {
            return false;
        }

        rate = fit.Rate;
        return fit.Rate > limit && fit.RSquared >= 0.8;
    }
}
