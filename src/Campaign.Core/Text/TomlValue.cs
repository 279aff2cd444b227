namespace Campaign.Core.Text;

/// <summary>Kinds of value the TOML reader understands.</summary>
public enum TomlKind
{
    /// <summary>A basic or literal string.</summary>
    String,

    /// <summary>A 64-bit integer.</summary>
    Integer,

    /// <summary>A double (including inf and nan, which validation then rejects where it must).</summary>
    Float,

    /// <summary>true or false.</summary>
    Boolean,

    /// <summary>A local date (YYYY-MM-DD) or a date-time.</summary>
    DateTime,

    /// <summary>An array of values.</summary>
    Array,

    /// <summary>A table (a [header], an array-of-tables element, or an inline table).</summary>
    Table,
}

/// <summary>One value read from a TOML document, with the line and column where it starts (1-based).</summary>
public sealed class TomlValue
{
    internal TomlValue(TomlKind kind, object value, string text, int line, int column)
    {
        Kind = kind;
        Value = value;
        Text = text;
        Line = line;
        Column = column;
    }

    /// <summary>What kind of value this is.</summary>
    public TomlKind Kind { get; }

    /// <summary>The value: string, long, double, bool, DateTime, List&lt;TomlValue&gt; or <see cref="TomlTable"/>.</summary>
    public object Value { get; }

    /// <summary>The value as written in the file, for error messages.</summary>
    public string Text { get; }

    /// <summary>1-based line where the value starts.</summary>
    public int Line { get; }

    /// <summary>1-based column where the value starts.</summary>
    public int Column { get; }

    /// <summary>The elements when this is an array.</summary>
    public IReadOnlyList<TomlValue> Items => (List<TomlValue>)Value;

    /// <summary>The table when this is a table.</summary>
    public TomlTable Table => (TomlTable)Value;

    /// <summary>A human name of the kind, for "expected" phrases.</summary>
    public static string Describe(TomlKind kind) => kind switch
    {
        TomlKind.String => "a string",
        TomlKind.Integer => "an integer",
        TomlKind.Float => "a number",
        TomlKind.Boolean => "true or false",
        TomlKind.DateTime => "a date",
        TomlKind.Array => "an array",
        _ => "a table",
    };
}
