using System.Text;

namespace Campaign.Cli.Output;

/// <summary>A plain-text table for humans: a header, a rule, and columns padded to their widest cell.
/// Columns whose cells all look numeric are right-aligned.</summary>
internal sealed class TextTable
{
    private readonly string[] _header;
    private readonly List<string[]> _rows = new();

    public TextTable(params string[] header) => _header = header;

    public void Add(params string[] cells)
    {
        if (cells.Length != _header.Length)
        {
            throw new ArgumentException($"A row needs {_header.Length} cells, got {cells.Length}.", nameof(cells));
        }

        _rows.Add(cells);
    }

    public void WriteTo(TextWriter writer)
    {
        var widths = _header.Select((h, i) => Math.Max(h.Length, _rows.Count == 0 ? 0 : _rows.Max(r => r[i].Length))).ToArray();
        var numeric = _header.Select((_, i) => _rows.Count > 0 && _rows.All(r => IsNumeric(r[i]))).ToArray();
        writer.WriteLine(Line(_header, widths, numeric).TrimEnd());
        writer.WriteLine(string.Join("  ", widths.Select(w => new string('-', w))));
        foreach (var row in _rows)
        {
            writer.WriteLine(Line(row, widths, numeric).TrimEnd());
        }
    }

    private static string Line(string[] cells, int[] widths, bool[] numeric)
    {
        var builder = new StringBuilder();
        for (var i = 0; i < cells.Length; i++)
        {
            if (i > 0)
            {
                builder.Append("  ");
            }

            builder.Append(numeric[i] ? cells[i].PadLeft(widths[i]) : cells[i].PadRight(widths[i]));
        }

        return builder.ToString();
    }

    private static bool IsNumeric(string cell) =>
        cell.Length > 0 && cell.All(c => char.IsAsciiDigit(c) || c is '.' or '-' or '+' or 'e' or 'E' or ',');
}
