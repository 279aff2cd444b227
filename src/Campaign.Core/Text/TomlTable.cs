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

    /// <summary>
    /// Gives the value written under <paramref name="from"/> the key <paramref name="to"/> (in place, keeping the
    /// order); false when <paramref name="from"/> is absent or <paramref name="to"/> is written too.
    /// </summary>
    internal bool Rename(string from, string to)
    {
        if (!_entries.Remove(from, out var value) || _entries.ContainsKey(to))
        {
            if (value is not null)
            {
                _entries[from] = value;
            }

            return false;
        }

        _entries[to] = value;
        _order[_order.IndexOf(from)] = to;
        return true;
    }

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
