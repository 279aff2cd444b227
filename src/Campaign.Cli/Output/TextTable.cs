using Spectre.Console;
using Spectre.Console.Rendering;

namespace Campaign.Cli.Output;

/// <summary>
/// A table for humans, laid out by Spectre.Console within the screen's width (<see cref="Screen.Width"/>, 100
/// columns when the output is redirected): long cells wrap inside their column instead of widening the table.
/// On a terminal it has a rounded frame; redirected it is plain text: a header, a rule of dashes and columns
/// two spaces apart, nothing else, so scripts and tests read it predictably. Columns whose cells all look numeric
/// are right-aligned. Cells stay on one line except in the columns marked with <see cref="Wrap"/> (reasons,
/// notes), which take what room is left and wrap in it.
/// </summary>
internal sealed class TextTable
{
    private readonly string[] _header;
    private readonly List<string[]> _rows = new();
    private readonly HashSet<int> _wrap = new();

    public TextTable(params string[] header)
    {
        if (header.Any(string.IsNullOrWhiteSpace))
        {
            throw new ArgumentException("Every column needs a header.", nameof(header));
        }

        _header = header;
    }

    /// <summary>Rows added so far.</summary>
    public int Count => _rows.Count;

    public void Add(params string[] cells)
    {
        if (cells.Length != _header.Length)
        {
            throw new ArgumentException($"A row needs {_header.Length} cells, got {cells.Length}.", nameof(cells));
        }

        _rows.Add(cells);
    }

    /// <summary>Lets the named columns wrap (long text: reasons, notes), so the table fits the screen.</summary>
    public TextTable Wrap(params string[] columns)
    {
        foreach (var column in columns)
        {
            _wrap.Add(Array.IndexOf(_header, column) is >= 0 and var i ? i : throw new ArgumentException($"No column '{column}'.", nameof(columns)));
        }

        return this;
    }

    public void WriteTo(TextWriter writer)
    {
        var framed = Screen.IsTerminal(writer);
        var gap = framed ? 3 : 2; // padding and separator between columns
        var natural = _header.Select((h, i) => Math.Max(h.Length, _rows.Count == 0 ? 0 : _rows.Max(r => r[i].Length))).ToArray();
        var width = Screen.WidthOf(writer) - (framed ? 2 : 0);
        var fixedWidth = natural.Where((_, i) => !_wrap.Contains(i)).Sum() + gap * natural.Length;
        var wrapping = _wrap.Where(i => natural[i] > 0).ToList();
        var widths = natural.ToArray();
        if (fixedWidth + natural.Where((_, i) => _wrap.Contains(i)).Sum() > width && wrapping.Count > 0)
        {
            // Only the text columns give way: each gets an even share of the room left, at least 12 characters.
            var share = Math.Max(12, (width - fixedWidth) / wrapping.Count);
            foreach (var i in wrapping)
            {
                widths[i] = Math.Min(natural[i], share);
            }
        }

        var table = new Table { Border = framed ? TableBorder.Rounded : new PlainBorder(), Expand = false };
        for (var i = 0; i < _header.Length; i++)
        {
            var numeric = _rows.Count > 0 && _rows.All(r => IsNumeric(r[i]));
            var column = new TableColumn(new Text(_header[i])) { Alignment = numeric ? Justify.Right : Justify.Left, NoWrap = !_wrap.Contains(i), Width = widths[i] };
            column.Padding = framed ? new Padding(1, 0, 1, 0) : new Padding(0, 0, 1, 0);
            table.AddColumn(column);
        }

        foreach (var row in _rows)
        {
            table.AddRow(row.Select(c => (IRenderable)new Text(c)).ToArray());
        }

        // A table whose fixed columns alone are wider than the screen is drawn whole rather than squeezed (numbers
        // are never broken); the commands keep their default tables within the width.
        Screen.Write(writer, table, trimPlain: !framed, minimumWidth: widths.Sum() + gap * widths.Length + (framed ? 4 : 2));
    }

    private static bool IsNumeric(string cell) =>
        cell.Length > 0 && cell.All(c => char.IsAsciiDigit(c) || c is '.' or '-' or '+' or 'e' or 'E' or ',' or '%' or 'x');

    /// <summary>Plain text: a rule of dashes under the header, a space between columns (plus the padding), nothing else.</summary>
    private sealed class PlainBorder : TableBorder
    {
        public override string GetPart(TableBorderPart part) => part switch
        {
            TableBorderPart.HeaderBottomLeft or TableBorderPart.HeaderBottomRight => "",
            TableBorderPart.HeaderBottom => "-",
            TableBorderPart.HeaderLeft or TableBorderPart.HeaderRight or TableBorderPart.CellLeft or TableBorderPart.CellRight => "",
            _ => " ",
        };
    }
}
