using System.Globalization;
using System.Text;
using System.Text.RegularExpressions;

namespace Campaign.Batch;

/// <summary>
/// Job names that carry the run id and segment number and are safe for every batch system:
/// "cmp.RUNID.sNNN", with RUNID reduced to letters, digits, '-' and '_' (other characters become '_'),
/// at most 64 characters in all. No quoting is ever needed.
/// </summary>
public static partial class JobName
{
    /// <summary>What a valid name looks like, for messages.</summary>
    public const string Rule = "1 to 64 characters: letters, digits, '.', '-' or '_'";

    /// <summary>The name of segment <paramref name="segment"/> of run <paramref name="runId"/>.</summary>
    public static string For(string runId, int segment)
    {
        var clean = new StringBuilder();
        foreach (var c in runId)
        {
            clean.Append(char.IsAsciiLetterOrDigit(c) || c is '-' or '_' ? c : '_');
        }

        var suffix = ".s" + segment.ToString("D3", CultureInfo.InvariantCulture);
        var room = 64 - "cmp.".Length - suffix.Length;
        var id = clean.Length > room ? clean.ToString(0, room) : clean.ToString();
        return "cmp." + id + suffix;
    }

    /// <summary>True when <paramref name="name"/> needs no quoting anywhere.</summary>
    public static bool IsValid(string name) => SafeName().IsMatch(name);

    [GeneratedRegex("^[A-Za-z0-9._-]{1,64}\\z")]
    private static partial Regex SafeName();
}
