using System.Globalization;

namespace Campaign.Cli.Output;

/// <summary>
/// A progress bar for long commands, drawn on standard error only when it is a terminal and the output is not
/// JSON; otherwise silent (redirected output stays line-oriented and free of control characters).
/// </summary>
internal sealed class TerminalProgress : IProgress<double>, IDisposable
{
    private readonly string _label;
    private readonly bool _visible;
    private int _lastPercent = -1;

    private TerminalProgress(string label, bool visible)
    {
        _label = label;
        _visible = visible;
    }

    /// <summary>A bar for <paramref name="label"/>, visible only on an interactive terminal without --json.</summary>
    public static TerminalProgress For(CommandContext context, string label) =>
        new(label, !context.Json && ReferenceEquals(context.Err, Console.Error) && !Console.IsErrorRedirected);

    /// <inheritdoc />
    public void Report(double value)
    {
        if (!_visible)
        {
            return;
        }

        var percent = (int)Math.Clamp(value * 100, 0, 100);
        if (percent == Interlocked.Exchange(ref _lastPercent, percent))
        {
            return;
        }

        var filled = percent * 30 / 100;
        Console.Error.Write($"\r{_label} [{new string('#', filled)}{new string('.', 30 - filled)}] {percent.ToString(CultureInfo.InvariantCulture),3}%");
    }

    /// <inheritdoc />
    public void Dispose()
    {
        if (_visible && _lastPercent >= 0)
        {
            Console.Error.Write("\r" + new string(' ', _label.Length + 40) + "\r");
        }
    }
}
