using System.Globalization;

namespace Campaign.Cli.Output;

/// <summary>Number formatting for humans, always with the invariant culture.</summary>
internal static class Format
{
    public static string Fixed(double value, int decimals) => value.ToString("F" + decimals.ToString(CultureInfo.InvariantCulture), CultureInfo.InvariantCulture);

    public static string Significant(double value, int digits = 4) => value.ToString("G" + digits.ToString(CultureInfo.InvariantCulture), CultureInfo.InvariantCulture);

    public static string Integer(long value) => value.ToString(CultureInfo.InvariantCulture);

    public static string Grouped(double value) => value.ToString("N0", CultureInfo.InvariantCulture);
}
