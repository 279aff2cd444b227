using Spectre.Console;
using Spectre.Console.Rendering;

namespace Campaign.Cli.Output;

/// <summary>
/// Where human output goes: a terminal (its own width, a frame around tables) or anything else (a file, a pipe,
/// a test's buffer: 100 columns of plain text, no colour, no escape codes).
/// </summary>
internal static class Screen
{
    /// <summary>The width of redirected output, and the most a terminal's tables use.</summary>
    public const int Width = 100;

    /// <summary>The width of --detail output: the full sheets, as wide as they need.</summary>
    public const int Unbounded = 10_000;

    /// <summary>True when <paramref name="writer"/> is the process's standard output and that is a terminal.</summary>
    public static bool IsTerminal(TextWriter writer) =>
        writer is WrappingWriter wrapping ? IsTerminal(wrapping.Inner) : ReferenceEquals(writer, Console.Out) && !Console.IsOutputRedirected;

    /// <summary>Columns available on <paramref name="writer"/>.</summary>
    public static int WidthOf(TextWriter writer)
    {
        if (writer is WrappingWriter wrapping)
        {
            return wrapping.Width;
        }

        if (!IsTerminal(writer))
        {
            return Width;
        }

        try
        {
            return Math.Clamp(Console.WindowWidth, 40, Width);
        }
        catch (IOException)
        {
            return Width;
        }
    }

    /// <summary>
    /// Renders <paramref name="renderable"/> onto <paramref name="writer"/>. Plain output has no trailing spaces and no
    /// blank first or last line.
    /// </summary>
    public static void Write(TextWriter writer, IRenderable renderable, bool trimPlain = true, int minimumWidth = 0)
    {
        var buffer = new StringWriter();
        var console = AnsiConsole.Create(new AnsiConsoleSettings
        {
            Ansi = IsTerminal(writer) ? AnsiSupport.Detect : AnsiSupport.No,
            ColorSystem = IsTerminal(writer) ? ColorSystemSupport.Detect : ColorSystemSupport.NoColors,
            Interactive = InteractionSupport.No,
            Out = new AnsiConsoleOutput(buffer),
        });
        console.Profile.Width = Math.Max(WidthOf(writer), minimumWidth);
        console.Write(renderable);
        var lines = buffer.ToString().Replace("\r\n", "\n", StringComparison.Ordinal).Split('\n').Select(l => trimPlain ? l.TrimEnd() : l).ToList();
        while (lines.Count > 0 && lines[0].Trim().Length == 0)
        {
            lines.RemoveAt(0);
        }

        while (lines.Count > 0 && lines[^1].Trim().Length == 0)
        {
            lines.RemoveAt(lines.Count - 1);
        }

        // Laid out already: past any line wrapping.
        var target = WrappingWriter.Unwrapped(writer);
        foreach (var line in lines)
        {
            target.WriteLine(line);
        }
    }
}
