namespace Campaign.Core.Text;

/// <summary>A TOML table: keys in the order they were written, each with its located value.</summary>
public sealed class TomlTable
{
    private readonly Dictionary<string, TomlValue> _entries = new(StringComparer.Ordinal);
    private readonly List<string> _order = new();

    internal TomlTable(string path, int line, int column)
    {
        Path = path;
        Line = line;
        Column = column;
    }

    /// <summary>Dotted path of the table from the document root ("" for the root).</summary>
    public string Path { get; }

    /// <summary>1-based line of the table's header (1 for the root).</summary>
    public int Line { get; }

    /// <summary>1-based column of the table's header.</summary>
    public int Column { get; }

    /// <summary>Keys in the order written.</summary>
    public IReadOnlyList<string> Keys => _order;

    /// <summary>True when the table defines <paramref name="key"/>.</summary>
    public bool Contains(string key) => _entries.ContainsKey(key);

    /// <summary>Looks up a key.</summary>
    public bool TryGet(string key, out TomlValue value) => _entries.TryGetValue(key, out value!);

    /// <summary>Full dotted name of a key in this table, as used in messages.</summary>
    public string NameOf(string key) => Path.Length == 0 ? key : Path + "." + key;

    internal bool TryAdd(string key, TomlValue value)
    {
        if (!_entries.TryAdd(key, value))
        {
            return false;
        }

        _order.Add(key);
        return true;
    }
}
