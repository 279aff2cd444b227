using System.Globalization;
using System.Text.RegularExpressions;

namespace Campaign.Core.Text;

/// <summary>
/// Amounts of core-hours (or node-hours) as people write them: "2500000", "2,500,000", "2_500_000", "2.5e6",
/// "2.5M", "250k" (k = thousand, M = million, G = thousand million). One parser for the command line and the
/// TOML allocations.
/// </summary>
public static partial class Amount
{
    /// <summary>What an amount may look like, for messages.</summary>
    public const string Expected = "an amount such as 2500000, 2,500,000, 2_500_000, 2.5e6, 2.5M or 250k";

    /// <summary>Reads <paramref name="text"/>; false (and no value) when it is not an amount.</summary>
    public static bool TryParse(string text, out double value)
    {
        value = 0;
        var match = Shape().Match(text.Trim());
        if (!match.Success)
        {
            return false;
        }

        var digits = match.Groups["number"].Value;
        if (digits.Contains(',', StringComparison.Ordinal) && !Grouped().IsMatch(digits))
        {
            return false; // commas only between groups of three: "2,500,000", never "2,50"
        }

        var plain = digits.Replace(",", "", StringComparison.Ordinal).Replace("_", "", StringComparison.Ordinal);
        if (!double.TryParse(plain + match.Groups["exponent"].Value, NumberStyles.AllowDecimalPoint | NumberStyles.AllowExponent, CultureInfo.InvariantCulture, out var number))
        {
            return false;
        }

        value = number * match.Groups["suffix"].Value switch
        {
            "k" or "K" => 1e3,
            "M" => 1e6,
            "G" => 1e9,
            _ => 1,
        };
        return double.IsFinite(value);
    }

    // Digits with optional '_' between them or ',' thousands separators, an optional fraction, exponent and suffix.
    [GeneratedRegex(@"^(?<number>\d(?:[\d_,]*\d)?(?:\.\d+)?)(?<exponent>[eE][+-]?\d+)?\s*(?<suffix>[kKMG])?\z")]
    private static partial Regex Shape();

    [GeneratedRegex(@"^\d{1,3}(?:,\d{3})+(?:\.\d+)?\z")]
    private static partial Regex Grouped();
}
