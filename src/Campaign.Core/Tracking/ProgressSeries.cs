using System.Globalization;
using System.Text.RegularExpressions;

namespace Campaign.Core.Tracking;

/// <summary>One progress report: simulated time t (M) and, when reported, a constraint-violation norm.</summary>
public readonly record struct ProgressPoint(double Time, double? Norm);

/// <summary>Reads progress reports from a simulation's progress file or log.</summary>
public static class ProgressSeries
{
    /// <summary>
    /// Lines "t [norm]" (whitespace separated, '#' comments). A line that does not parse is skipped (the last one
    /// may be half-written); so is a non-finite t. A non-finite norm ("nan", "inf", as C and Fortran print them)
    /// is kept: it is the clearest sign of a run gone bad.
    /// </summary>
    public static IReadOnlyList<ProgressPoint> FromColumns(string text)
    {
        var points = new List<ProgressPoint>();
        foreach (var raw in text.Split('\n'))
        {
            var line = raw.Trim();
            if (line.Length == 0 || line[0] == '#')
            {
                continue;
            }

            var parts = line.Split((char[]?)null, StringSplitOptions.RemoveEmptyEntries);
            if (!double.TryParse(parts[0], NumberStyles.Float, CultureInfo.InvariantCulture, out var t) || !double.IsFinite(t))
            {
                continue;
            }

            double? norm = parts.Length > 1 ? Norm(parts[1]) : null;
            points.Add(new ProgressPoint(t, norm));
        }

        return points;
    }

    /// <summary>A norm as printed: a number, or a non-finite value in C's or Fortran's spelling; null when it is neither.</summary>
    public static double? Norm(string text)
    {
        if (double.TryParse(text, NumberStyles.Float, CultureInfo.InvariantCulture, out var n))
        {
            return n;
        }

        return text.TrimStart('+', '-').ToLowerInvariant() switch
        {
            "nan" or "nan(ind)" or "nanq" or "nans" => double.NaN,
            "inf" or "infinity" => text.StartsWith('-') ? double.NegativeInfinity : double.PositiveInfinity,
            _ => null,
        };
    }

    /// <summary>Matches of <paramref name="pattern"/> (named groups "t" and optional "norm") over a log.</summary>
    public static IReadOnlyList<ProgressPoint> FromLog(string text, string pattern)
    {
        var regex = new Regex(pattern, RegexOptions.Multiline | RegexOptions.CultureInvariant, TimeSpan.FromSeconds(2));
        var points = new List<ProgressPoint>();
        foreach (Match match in regex.Matches(text))
        {
            if (double.TryParse(match.Groups["t"].Value, NumberStyles.Float, CultureInfo.InvariantCulture, out var t) && double.IsFinite(t))
            {
                var normGroup = match.Groups["norm"];
                double? norm = normGroup.Success ? Norm(normGroup.Value) : null;
                points.Add(new ProgressPoint(t, norm));
            }
        }

        return points;
    }
}
