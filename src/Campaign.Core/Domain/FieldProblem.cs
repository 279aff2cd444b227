using System.Globalization;

namespace Campaign.Core.Domain;

/// <summary>
/// One thing wrong with one field of an input: the field, the offending value as the user wrote it
/// (or as it was formatted with the invariant culture) and what was expected instead.
/// </summary>
/// <param name="Field">Field name as the user knows it (a CSV column, a TOML key, a command-line option).</param>
/// <param name="Value">The offending value.</param>
/// <param name="Expected">What would have been accepted, as a phrase that follows "expected".</param>
public sealed record FieldProblem(string Field, string Value, string Expected)
{
    /// <summary>Formats a number for a problem message with the invariant culture ("R" round-trips it).</summary>
    public static string Show(double value) => value.ToString("R", CultureInfo.InvariantCulture);

    /// <summary>Formats an integer for a problem message with the invariant culture.</summary>
    public static string Show(long value) => value.ToString(CultureInfo.InvariantCulture);

    /// <summary>"field = value: expected ..."</summary>
    public string Message => $"{Field} = {Value}: expected {Expected}";

    /// <inheritdoc />
    public override string ToString() => Message;
}
