using System.Globalization;
using System.Text;

namespace Campaign.Core.Text;

/// <summary>One data row of a CSV file: its cells and the 1-based line where it starts.</summary>
public sealed record CsvRow(int Line, IReadOnlyList<string> Cells);

/// <summary>
/// A CSV file read into a header and rows (RFC 4180: comma separated, double-quoted cells may hold commas,
/// quotes doubled, and line breaks). A leading byte-order mark and CRLF line ends are accepted; blank lines
/// and lines starting with '#' are skipped. Header names are trimmed; cells are trimmed unless quoted.
/// </summary>
public sealed class CsvTable
{
    private readonly Dictionary<string, int> _columns;

    /// <summary>The 1-based line of the header (comment lines may come before it).</summary>
    public int HeaderLine { get; private init; } = 1;

    private CsvTable(string source, IReadOnlyList<string> header, IReadOnlyList<CsvRow> rows)
    {
        Source = source;
        Header = header;
        Rows = rows;
        _columns = new Dictionary<string, int>(StringComparer.Ordinal);
        for (var i = 0; i < header.Count; i++)
        {
            _columns.TryAdd(header[i], i);
        }
    }

    /// <summary>Name of the file, for messages.</summary>
    public string Source { get; }

    /// <summary>Column names in order.</summary>
    public IReadOnlyList<string> Header { get; }

    /// <summary>Data rows in file order.</summary>
    public IReadOnlyList<CsvRow> Rows { get; }

    /// <summary>0-based index of a column, or -1.</summary>
    public int ColumnIndex(string name) => _columns.TryGetValue(name, out var i) ? i : -1;

    /// <summary>True when the header has the column.</summary>
    public bool Has(string name) => _columns.ContainsKey(name);

    /// <summary>Parses CSV text; throws <see cref="InvalidDataException"/> with source:line:column on malformed text.</summary>
    public static CsvTable Parse(string text, string source)
    {
        if (text.Length > 0 && text[0] == '\uFEFF')
        {
            text = text[1..];
        }

        if (text.Contains('\0', StringComparison.Ordinal))
        {
            throw new InvalidDataException($"{source}:{Locate(text, text.IndexOf('\0', StringComparison.Ordinal))}: a NUL byte: expected UTF-8 text");
        }

        if (text.Contains('\uFFFD', StringComparison.Ordinal))
        {
            var at = Locate(text, text.IndexOf('\uFFFD', StringComparison.Ordinal));
            throw new InvalidDataException($"{source}:{at}: bytes that are not valid UTF-8: expected UTF-8 text");
        }

        var records = ReadRecords(text, source);
        var dataRecords = records.Where(r => !(r.Cells.Count == 1 && r.Cells[0].Length == 0 && !r.Quoted) && !(r.Cells.Count > 0 && !r.Quoted && r.Cells[0].StartsWith('#'))).ToList();
        if (dataRecords.Count == 0)
        {
            throw new InvalidDataException($"{source}:1:1: the file is empty: expected a header line of column names");
        }

        var header = dataRecords[0].Cells.Select(c => c.Trim()).ToList();
        var seen = new HashSet<string>(StringComparer.Ordinal);
        for (var i = 0; i < header.Count; i++)
        {
            if (header[i].Length == 0)
            {
                throw new InvalidDataException($"{source}:{dataRecords[0].Line}:{ColumnNumber(i)}: empty column name in the header: expected a name");
            }

            if (!seen.Add(header[i]))
            {
                throw new InvalidDataException($"{source}:{dataRecords[0].Line}:{ColumnNumber(i)}: column '{header[i]}' appears twice in the header: expected each column once");
            }
        }

        var rows = new List<CsvRow>();
        foreach (var record in dataRecords.Skip(1))
        {
            if (record.Cells.Count != header.Count)
            {
                throw new InvalidDataException($"{source}:{record.Line}:1: {record.Cells.Count} cells: expected {header.Count}, one per header column ({string.Join(", ", header)})");
            }

            rows.Add(new CsvRow(record.Line, record.Cells));
        }

        return new CsvTable(source, header, rows) { HeaderLine = dataRecords[0].Line };
    }

    private static string ColumnNumber(int index) => (index + 1).ToString(CultureInfo.InvariantCulture);

    private static string Locate(string text, int index)
    {
        var line = 1;
        var column = 1;
        for (var i = 0; i < index; i++)
        {
            if (text[i] == '\n')
            {
                line++;
                column = 1;
            }
            else
            {
                column++;
            }
        }

        return $"{line}:{column}";
    }

    private sealed record Record(int Line, List<string> Cells, bool Quoted);

    private static List<Record> ReadRecords(string text, string source)
    {
        var records = new List<Record>();
        var cells = new List<string>();
        var cell = new StringBuilder();
        var line = 1;
        var recordLine = 1;
        var quotedCell = false;
        var anyQuoted = false;
        var i = 0;
        while (i <= text.Length)
        {
            var atEnd = i == text.Length;
            var c = atEnd ? '\n' : text[i];
            if (c == '"' && cell.Length == 0 && !quotedCell)
            {
                quotedCell = true;
                anyQuoted = true;
                var startIndex = i;
                i++;
                while (true)
                {
                    if (i >= text.Length)
                    {
                        throw new InvalidDataException($"{source}:{Locate(text, startIndex)}: a quoted cell is not closed: expected a closing '\"'");
                    }

                    if (text[i] == '"')
                    {
                        if (i + 1 < text.Length && text[i + 1] == '"')
                        {
                            cell.Append('"');
                            i += 2;
                            continue;
                        }

                        i++;
                        break;
                    }

                    if (text[i] == '\n')
                    {
                        line++;
                    }

                    cell.Append(text[i]);
                    i++;
                }

                while (i < text.Length && text[i] is ' ' or '\t')
                {
                    i++;
                }

                if (i < text.Length && text[i] is not (',' or '\n' or '\r'))
                {
                    throw new InvalidDataException($"{source}:{line}: text after a closing quote: expected ',' or the end of the line");
                }

                continue;
            }

            if (c == ',')
            {
                cells.Add(quotedCell ? cell.ToString() : cell.ToString().Trim());
                cell.Clear();
                quotedCell = false;
                i++;
                continue;
            }

            if (c == '\r' && i + 1 < text.Length && text[i + 1] == '\n')
            {
                i++;
                continue;
            }

            if (c == '\n')
            {
                cells.Add(quotedCell ? cell.ToString() : cell.ToString().Trim());
                if (!(atEnd && cells.Count == 1 && cells[0].Length == 0 && !quotedCell))
                {
                    records.Add(new Record(recordLine, cells, anyQuoted));
                }

                cells = new List<string>();
                cell.Clear();
                quotedCell = false;
                anyQuoted = false;
                line++;
                recordLine = line;
                i++;
                continue;
            }

            if (c == '"')
            {
                throw new InvalidDataException($"{source}:{line}: a quote inside an unquoted cell: expected the whole cell in quotes, with quotes doubled");
            }

            cell.Append(c);
            i++;
        }

        return records;
    }
}
