using System.Text;

namespace Campaign.Cli.Output;

/// <summary>
/// Human output kept within the screen's width: a line longer than <see cref="Width"/> is broken at spaces, its
/// continuation lines indented by two spaces (a word longer than a line stays whole). Tables arrive already
/// laid out within the width and pass unchanged. JSON never goes through it.
/// </summary>
internal sealed class WrappingWriter : TextWriter
{
    private readonly StringBuilder _line = new();

    public WrappingWriter(TextWriter inner, int width)
    {
        Inner = inner;
        Width = width;
    }

    /// <summary>The writer lines go to.</summary>
    public TextWriter Inner { get; }

    /// <summary>The widest line written.</summary>
    public int Width { get; }

    public override Encoding Encoding => Inner.Encoding;

    /// <summary>
    /// The writer under <paramref name="writer"/>, with what was written so far flushed: for output whose lines must
    /// stay whole (Markdown, CSV, LaTeX).
    /// </summary>
    public static TextWriter Unwrapped(TextWriter writer)
    {
        if (writer is not WrappingWriter wrapping)
        {
            return writer;
        }

        wrapping.Flush();
        return wrapping.Inner;
    }

    public override void Write(char value)
    {
        if (value == '\n')
        {
            Emit();
        }
        else if (value != '\r')
        {
            _line.Append(value);
        }
    }

    public override void Write(string? value)
    {
        foreach (var c in value ?? "")
        {
            Write(c);
        }
    }

    public override void Flush()
    {
        if (_line.Length > 0)
        {
            Inner.Write(_line.ToString());
            _line.Clear();
        }

        Inner.Flush();
    }

    /// <summary>Breaks <paramref name="line"/> into lines of at most <paramref name="width"/> characters.</summary>
    public static IEnumerable<string> Break(string line, int width)
    {
        if (line.Length <= width)
        {
            yield return line;
            yield break;
        }

        var indent = line.Length - line.TrimStart().Length + 2;
        var rest = line;
        var first = true;
        while (rest.Length > 0)
        {
            var prefix = first ? "" : new string(' ', Math.Min(indent, width / 2));
            var room = width - prefix.Length;
            if (rest.Length <= room)
            {
                yield return prefix + rest;
                yield break;
            }

            var cut = rest.LastIndexOf(' ', room);
            if (cut <= 0)
            {
                cut = rest.IndexOf(' ', room) is var next and > 0 ? next : rest.Length;
            }

            yield return prefix + rest[..cut].TrimEnd();
            rest = rest[cut..].TrimStart();
            first = false;
        }
    }

    private void Emit()
    {
        foreach (var part in Break(_line.ToString(), Width))
        {
            Inner.WriteLine(part);
        }

        _line.Clear();
    }

    protected override void Dispose(bool disposing)
    {
        if (disposing)
        {
            Flush();
        }

        base.Dispose(disposing);
    }
}
