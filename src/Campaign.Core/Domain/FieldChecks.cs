namespace Campaign.Core.Domain;

/// <summary>
/// The one place where range checks on input fields are written. Every check rejects NaN and
/// infinities, and every message carries the field, the value and the allowed range.
/// </summary>
public sealed class FieldChecks
{
    private readonly List<FieldProblem> _problems = new();

    /// <summary>Problems found so far, in the order the checks ran.</summary>
    public IReadOnlyList<FieldProblem> Problems => _problems;

    /// <summary>True when no check has failed.</summary>
    public bool Ok => _problems.Count == 0;

    /// <summary>Records a problem directly.</summary>
    public void Add(string field, string value, string expected) => _problems.Add(new FieldProblem(field, value, expected));

    /// <summary>Requires a finite number in [min, max] (inclusive).</summary>
    public bool InRange(string field, double value, double min, double max, string? hint = null)
    {
        if (double.IsFinite(value) && value >= min && value <= max)
        {
            return true;
        }

        Add(field, FieldProblem.Show(value), Range(min, max, minInclusive: true, maxInclusive: true) + Hint(hint));
        return false;
    }

    /// <summary>Requires a finite number with min &lt; value &lt; max (both exclusive).</summary>
    public bool InOpenRange(string field, double value, double min, double max)
    {
        if (double.IsFinite(value) && value > min && value < max)
        {
            return true;
        }

        Add(field, FieldProblem.Show(value), Range(min, max, minInclusive: false, maxInclusive: false));
        return false;
    }

    /// <summary>Requires a finite number with min &lt; value &lt;= max.</summary>
    public bool Positive(string field, double value, double max)
    {
        if (double.IsFinite(value) && value > 0 && value <= max)
        {
            return true;
        }

        Add(field, FieldProblem.Show(value), Range(0, max, minInclusive: false, maxInclusive: true));
        return false;
    }

    /// <summary>Requires an integer in [min, max].</summary>
    public bool InRange(string field, long value, long min, long max)
    {
        if (value >= min && value <= max)
        {
            return true;
        }

        Add(field, FieldProblem.Show(value), $"an integer from {FieldProblem.Show(min)} to {FieldProblem.Show(max)}");
        return false;
    }

    /// <summary>Throws <see cref="InvalidInputException"/> when any check failed, prefixing each problem.</summary>
    public void ThrowIfAny(string prefix = "")
    {
        if (!Ok)
        {
            throw new InvalidInputException(_problems.Select(p => prefix + p.Message).ToList());
        }
    }

    private static string Hint(string? hint) => hint is null ? string.Empty : "; " + hint;

    private static string Range(double min, double max, bool minInclusive, bool maxInclusive)
    {
        var low = FieldProblem.Show(min);
        var high = FieldProblem.Show(max);
        return (minInclusive, maxInclusive) switch
        {
            (true, true) => $"a finite number from {low} to {high}",
            (false, false) => $"a finite number greater than {low} and less than {high}",
            (false, true) => $"a finite number greater than {low} and at most {high}",
            _ => $"a finite number from {low} and less than {high}",
        };
    }
}
