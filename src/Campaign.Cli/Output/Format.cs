using System.Globalization;

namespace Campaign.Cli.Output;

/// <summary>
/// Number formatting for humans, always with the invariant culture. Large numbers get thousands separators
/// ("2,500,000") unless --plain-numbers asked for raw ones; JSON and CSV output never go through here.
/// </summary>
internal static class Format
{
    private static readonly AsyncLocal<bool> Plain = new();

    /// <summary>Turns thousands separators off for the current command (until the returned scope ends).</summary>
    public static IDisposable PlainNumbers(bool plain)
    {
        var before = Plain.Value;
        Plain.Value = plain;
        return new Scope(() => Plain.Value = before);
    }

    /// <summary>A fixed number of decimals; grouped in thousands from 1,000 on.</summary>
    public static string Fixed(double value, int decimals)
    {
        var digits = decimals.ToString(CultureInfo.InvariantCulture);
        return value.ToString((Math.Abs(value) >= 1_000 && !Plain.Value ? "N" : "F") + digits, CultureInfo.InvariantCulture);
    }

    public static string Significant(double value, int digits = 4) => value.ToString("G" + digits.ToString(CultureInfo.InvariantCulture), CultureInfo.InvariantCulture);

    /// <summary>A whole number; grouped in thousands from 1,000 on.</summary>
    public static string Integer(long value) => value.ToString(Math.Abs(value) >= 1_000 && !Plain.Value ? "N0" : "D", CultureInfo.InvariantCulture);

    /// <summary>Rounded to a whole number and grouped in thousands ("2,500,000").</summary>
    public static string Grouped(double value) => value.ToString(Plain.Value ? "F0" : "N0", CultureInfo.InvariantCulture);

    /// <summary>"1 core", "256 cores": the count and the noun, singular or plural as the count says.</summary>
    public static string Count(long count, string singular, string? plural = null) =>
        Integer(count) + " " + (count == 1 ? singular : plural ?? singular + "s");

    /// <summary>The first <paramref name="shown"/> items joined, then "and N more" when the list was cut.</summary>
    public static string List(IEnumerable<string> items, int shown, string separator = ", ")
    {
        var all = items.ToList();
        return all.Count <= shown
            ? string.Join(separator, all)
            : string.Join(separator, all.Take(shown)) + $"{separator}... and {all.Count - shown} more";
    }

    /// <summary>Text cut to <paramref name="width"/> characters, ending in "..." when it was cut.</summary>
    public static string Cut(string text, int width) => text.Length <= width ? text : text[..Math.Max(0, width - 3)].TrimEnd() + "...";

    private sealed class Scope(Action end) : IDisposable
    {
        public void Dispose() => end();
    }
}
