using System.Globalization;
using Campaign.Core.Domain;
using Campaign.Core.Text;

namespace Campaign.Core.Configuration;

/// <summary>
/// Typed, validated reads from one TOML table. Problems are collected (not thrown) in a shared list, each as
/// "source:line:column: field = value: expected ..." so one pass over a file reports everything wrong with it.
/// </summary>
public sealed class TomlFields
{
    private readonly TomlTable _table;
    private readonly string _source;
    private readonly List<string> _problems;

    /// <summary>Reads fields of <paramref name="table"/>, adding problems to <paramref name="problems"/>.</summary>
    public TomlFields(TomlTable table, string source, List<string> problems)
    {
        _table = table;
        _source = source;
        _problems = problems;
    }

    /// <summary>The table being read.</summary>
    public TomlTable Table => _table;

    /// <summary>A required or optional string; <paramref name="expected"/> describes allowed values.</summary>
    public string? String(string key, bool required, string expected = "a string")
    {
        var value = Get(key, required, expected);
        if (value is null)
        {
            return null;
        }

        if (value.Kind != TomlKind.String)
        {
            return Wrong<string>(key, value, expected);
        }

        return (string)value.Value;
    }

    /// <summary>A string that must be one of <paramref name="allowed"/>.</summary>
    public string? Choice(string key, bool required, params string[] allowed)
    {
        var expected = "one of " + string.Join(", ", allowed.Select(a => "\"" + a + "\""));
        var value = Get(key, required, expected);
        if (value is null)
        {
            return null;
        }

        if (value.Kind != TomlKind.String || !allowed.Contains((string)value.Value, StringComparer.Ordinal))
        {
            return Wrong<string>(key, value, expected);
        }

        return (string)value.Value;
    }

    /// <summary>A number (integer or float) in [min, max]; NaN and infinities are rejected.</summary>
    public double? Number(string key, bool required, double min, double max, string? unit = null)
    {
        var expected = $"a number from {FieldProblem.Show(min)} to {FieldProblem.Show(max)}{(unit is null ? "" : " " + unit)}";
        var value = Get(key, required, expected);
        if (value is null)
        {
            return null;
        }

        var number = AsNumber(value);
        if (!double.IsFinite(number) || number < min || number > max)
        {
            return Wrong<double?>(key, value, expected);
        }

        return number;
    }

    /// <summary>Any finite number (range checks follow elsewhere).</summary>
    public double? FiniteNumber(string key)
    {
        var value = Get(key, false, "a finite number");
        if (value is null)
        {
            return null;
        }

        var number = AsNumber(value);
        return double.IsFinite(number) ? number : Wrong<double?>(key, value, "a finite number");
    }

    /// <summary>A number greater than 0 and at most <paramref name="max"/>.</summary>
    public double? PositiveNumber(string key, bool required, double max, string? unit = null)
    {
        var expected = $"a number greater than 0 and at most {FieldProblem.Show(max)}{(unit is null ? "" : " " + unit)}";
        var value = Get(key, required, expected);
        if (value is null)
        {
            return null;
        }

        var number = AsNumber(value);
        if (!double.IsFinite(number) || number <= 0 || number > max)
        {
            return Wrong<double?>(key, value, expected);
        }

        return number;
    }

    /// <summary>
    /// An amount of core-hours or node-hours greater than 0 and at most <paramref name="max"/>: a TOML number, or a
    /// string written as people write amounts ("2.5M", "250k", "2,500,000"; <see cref="Amount"/>).
    /// </summary>
    public double? Amount(string key, bool required, double max)
    {
        var expected = $"a number greater than 0 and at most {FieldProblem.Show(max)}, or a string with {Text.Amount.Expected}";
        var value = Get(key, required, expected);
        if (value is null)
        {
            return null;
        }

        var number = value.Kind == TomlKind.String ? (Text.Amount.TryParse((string)value.Value, out var parsed) ? parsed : double.NaN) : AsNumber(value);
        if (!double.IsFinite(number) || number <= 0 || number > max)
        {
            return Wrong<double?>(key, value, expected);
        }

        return number;
    }

    /// <summary>An integer in [min, max].</summary>
    public long? Integer(string key, bool required, long min, long max)
    {
        var expected = $"an integer from {FieldProblem.Show(min)} to {FieldProblem.Show(max)}";
        var value = Get(key, required, expected);
        if (value is null)
        {
            return null;
        }

        if (value.Kind != TomlKind.Integer || (long)value.Value < min || (long)value.Value > max)
        {
            return Wrong<long?>(key, value, expected);
        }

        return (long)value.Value;
    }

    /// <summary>true or false.</summary>
    public bool? Boolean(string key, bool required)
    {
        var value = Get(key, required, "true or false");
        if (value is null)
        {
            return null;
        }

        if (value.Kind != TomlKind.Boolean)
        {
            return Wrong<bool?>(key, value, "true or false");
        }

        return (bool)value.Value;
    }

    /// <summary>A date written YYYY-MM-DD (a TOML local date, or a quoted string of that form).</summary>
    public DateOnly? Date(string key, bool required)
    {
        const string expected = "a date YYYY-MM-DD";
        var value = Get(key, required, expected);
        if (value is null)
        {
            return null;
        }

        if (value.Kind == TomlKind.DateTime)
        {
            return DateOnly.FromDateTime((DateTime)value.Value);
        }

        if (value.Kind == TomlKind.String && DateOnly.TryParseExact((string)value.Value, "yyyy-MM-dd", CultureInfo.InvariantCulture, DateTimeStyles.None, out var date))
        {
            return date;
        }

        return Wrong<DateOnly?>(key, value, expected);
    }

    /// <summary>An array of strings.</summary>
    public IReadOnlyList<string>? StringList(string key, bool required)
    {
        const string expected = "an array of strings";
        var value = Get(key, required, expected);
        if (value is null)
        {
            return null;
        }

        if (value.Kind != TomlKind.Array || value.Items.Any(i => i.Kind != TomlKind.String))
        {
            return Wrong<IReadOnlyList<string>>(key, value, expected);
        }

        return value.Items.Select(i => (string)i.Value).ToList();
    }

    /// <summary>An array of integers, each in [min, max].</summary>
    public IReadOnlyList<long>? IntegerList(string key, bool required, long min, long max)
    {
        var expected = $"an array of integers from {FieldProblem.Show(min)} to {FieldProblem.Show(max)}";
        var value = Get(key, required, expected);
        if (value is null)
        {
            return null;
        }

        if (value.Kind != TomlKind.Array || value.Items.Any(i => i.Kind != TomlKind.Integer || (long)i.Value < min || (long)i.Value > max))
        {
            return Wrong<IReadOnlyList<long>>(key, value, expected);
        }

        return value.Items.Select(i => (long)i.Value).ToList();
    }

    /// <summary>A sub-table ([key] or an inline table), or null when absent.</summary>
    public TomlTable? SubTable(string key, bool required)
    {
        var value = Get(key, required, "a table [" + _table.NameOf(key) + "]");
        if (value is null)
        {
            return null;
        }

        if (value.Kind != TomlKind.Table)
        {
            return Wrong<TomlTable>(key, value, "a table [" + _table.NameOf(key) + "]");
        }

        return value.Table;
    }

    /// <summary>The elements of an array of tables ([[key]] headers, or an array of inline tables).</summary>
    public IReadOnlyList<TomlTable> TableList(string key)
    {
        if (!_table.TryGet(key, out var value))
        {
            return Array.Empty<TomlTable>();
        }

        if (value.Kind != TomlKind.Array || value.Items.Any(i => i.Kind != TomlKind.Table))
        {
            Wrong<object>(key, value, "tables written [[" + _table.NameOf(key) + "]]");
            return Array.Empty<TomlTable>();
        }

        return value.Items.Select(i => i.Table).ToList();
    }

    /// <summary>Reports a problem located at a field's value (or at the table when the key is absent).</summary>
    public void Problem(string key, string expected)
    {
        if (_table.TryGet(key, out var value))
        {
            Wrong<object>(key, value, expected);
        }
        else
        {
            Add(_table.Line, _table.Column, $"{_table.NameOf(key)}: expected {expected}");
        }
    }

    /// <summary>
    /// Reads a field written under its former name (<paramref name="former"/>, from workspaces made before the
    /// current names) as <paramref name="current"/>, and says so in <paramref name="notices"/>: "file:line:column:
    /// 'machines' is the former name of 'clusters'; read as that (rename it)".
    /// </summary>
    public void Former(string former, string current, List<string> notices)
    {
        if (_table.TryGet(former, out var value) && _table.Rename(former, current))
        {
            notices.Add($"{_source}:{value.Line.ToString(CultureInfo.InvariantCulture)}:{value.Column.ToString(CultureInfo.InvariantCulture)}: '{_table.NameOf(former)}' is the former name of '{_table.NameOf(current)}'; read as that (rename it)");
        }
    }

    /// <summary>Reports every key not in <paramref name="known"/> (catches typos such as "wall_limit_hour").</summary>
    public void RejectUnknown(params string[] known)
    {
        foreach (var key in _table.Keys.Where(k => !known.Contains(k, StringComparer.Ordinal)))
        {
            _table.TryGet(key, out var value);
            Add(value.Line, value.Column, $"unknown field '{_table.NameOf(key)}': expected one of {string.Join(", ", known)}");
        }
    }

    /// <summary>The value as a double: integers widen, floats pass through, anything else is NaN.</summary>
    private static double AsNumber(TomlValue value) => value.Kind switch
    {
        TomlKind.Integer => (long)value.Value,
        TomlKind.Float => (double)value.Value,
        _ => double.NaN,
    };

    /// <summary>Parses TOML text, turning a syntax error into <see cref="InvalidInputException"/> (exit code 2).</summary>
    public static TomlTable Parse(string text, string source)
    {
        try
        {
            return TomlDocument.Parse(text, source);
        }
        catch (InvalidDataException e)
        {
            throw new InvalidInputException(new[] { e.Message });
        }
    }

    private TomlValue? Get(string key, bool required, string expected)
    {
        if (_table.TryGet(key, out var value))
        {
            return value;
        }

        if (required)
        {
            var where = _table.Path.Length == 0 ? "" : $" in [{_table.Path}]";
            Add(_table.Line, _table.Column, $"{_table.NameOf(key)} is missing{where}: expected {expected}");
        }

        return null;
    }

    private T? Wrong<T>(string key, TomlValue value, string expected)
    {
        Add(value.Line, value.Column, $"{_table.NameOf(key)} = {value.Text}: expected {expected}");
        return default;
    }

    private void Add(int line, int column, string message) =>
        _problems.Add($"{_source}:{line.ToString(CultureInfo.InvariantCulture)}:{column.ToString(CultureInfo.InvariantCulture)}: {message}");
}
