using System.Globalization;
using Campaign.Core.Text;

namespace Campaign.Core.Configuration;

/// <summary>
/// Typed reads from one CSV row with located problems ("file:line:column: column = value: expected ...").
/// Empty cells and absent columns read as null.
/// </summary>
public sealed class RowCells
{
    private readonly CsvTable _table;
    private readonly CsvRow _row;
    private readonly List<string> _problems;
    private readonly HashSet<string> _badColumns = new(StringComparer.Ordinal);

    /// <summary>Reads cells of <paramref name="row"/>, adding problems to <paramref name="problems"/>.</summary>
    public RowCells(CsvTable table, CsvRow row, List<string> problems)
    {
        _table = table;
        _row = row;
        _problems = problems;
    }

    /// <summary>The cell text, or null when the column is absent.</summary>
    public string? Text(string column)
    {
        var index = _table.ColumnIndex(column);
        return index < 0 ? null : _row.Cells[index];
    }

    /// <summary>A number in invariant culture; NaN and infinities are reported.</summary>
    public double? Number(string column)
    {
        var text = Text(column);
        if (string.IsNullOrEmpty(text))
        {
            return null;
        }

        if (!double.TryParse(text, NumberStyles.Float, CultureInfo.InvariantCulture, out var value) || !double.IsFinite(value))
        {
            Problem(column, text, "a finite number written with '.' as the decimal point");
            return null;
        }

        return value;
    }

    /// <summary>An integer in invariant culture.</summary>
    public long? Integer(string column)
    {
        var text = Text(column);
        if (string.IsNullOrEmpty(text))
        {
            return null;
        }

        if (!long.TryParse(text, NumberStyles.AllowLeadingSign, CultureInfo.InvariantCulture, out var value))
        {
            Problem(column, text, "an integer");
            return null;
        }

        return value;
    }

    /// <summary>true/false, yes/no or 1/0 (case-insensitive).</summary>
    public bool? Boolean(string column)
    {
        var text = Text(column);
        if (string.IsNullOrEmpty(text))
        {
            return null;
        }

        switch (text.ToLowerInvariant())
        {
            case "true" or "yes" or "1":
                return true;
            case "false" or "no" or "0":
                return false;
            default:
                Problem(column, text, "true or false (also yes/no, 1/0)");
                return null;
        }
    }

    /// <summary>Resolution levels separated by ';' (e.g. "2;3;4").</summary>
    public IReadOnlyList<long>? Levels(string column)
    {
        var text = Text(column);
        if (string.IsNullOrEmpty(text))
        {
            return null;
        }

        var levels = new List<long>();
        foreach (var part in text.Split(';', StringSplitOptions.TrimEntries))
        {
            if (!long.TryParse(part, NumberStyles.AllowLeadingSign, CultureInfo.InvariantCulture, out var level))
            {
                Problem(column, text, "resolution levels as integers separated by ';', e.g. 2;3;4");
                return null;
            }

            levels.Add(level);
        }

        return levels;
    }

    /// <summary>A configuration draft from the columns q, chi1x ... chi2z, omega0 and orbits (absent spin columns are 0).</summary>
    public Domain.BinaryConfigurationDraft Draft(string name) => new()
    {
        Name = name,
        Q = Number("q"),
        Chi1X = Number("chi1x") ?? 0,
        Chi1Y = Number("chi1y") ?? 0,
        Chi1Z = Number("chi1z") ?? 0,
        Chi2X = Number("chi2x") ?? 0,
        Chi2Y = Number("chi2y") ?? 0,
        Chi2Z = Number("chi2z") ?? 0,
        Omega0 = Number("omega0"),
        Orbits = Number("orbits"),
    };

    /// <summary>
    /// Reports the problems of a configuration draft at their columns ("|chi1|" at chi1z, "level" at levels),
    /// skipping columns whose cell was already reported unreadable.
    /// </summary>
    public void Report(IEnumerable<Domain.FieldProblem> problems)
    {
        foreach (var problem in problems)
        {
            var column = problem.Field switch
            {
                "|chi1|" => "chi1z",
                "|chi2|" => "chi2z",
                "level" => "levels",
                _ => problem.Field,
            };
            if (!HasProblem(column))
            {
                Problem(column, problem.Value, problem.Expected, problem.Field);
            }
        }
    }

    /// <summary>Parses CSV text, turning a malformed file into <see cref="Domain.InvalidInputException"/> (exit code 2).</summary>
    public static CsvTable Parse(string text, string source)
    {
        try
        {
            return CsvTable.Parse(text, source);
        }
        catch (InvalidDataException e)
        {
            throw new Domain.InvalidInputException(new[] { e.Message });
        }
    }

    /// <summary>True when a problem was already reported for <paramref name="column"/> in this row.</summary>
    public bool HasProblem(string column) => _badColumns.Contains(column);

    /// <summary>Reports a problem at a column of this row (at column 1 when the column is absent).</summary>
    public void Problem(string column, string value, string expected, string? field = null)
    {
        _badColumns.Add(column);
        var index = _table.ColumnIndex(column);
        var at = (index < 0 ? 1 : index + 1).ToString(CultureInfo.InvariantCulture);
        _problems.Add($"{_table.Source}:{_row.Line.ToString(CultureInfo.InvariantCulture)}:{at}: {field ?? column} = {value}: expected {expected}");
    }
}
