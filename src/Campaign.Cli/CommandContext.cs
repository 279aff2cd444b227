using System.CommandLine;

namespace Campaign.Cli;

/// <summary>What a command's action needs.</summary>
/// <param name="Parse">The parsed command line.</param>
/// <param name="Out">Standard output (tables or the one JSON document).</param>
/// <param name="Err">Standard error (messages for humans).</param>
/// <param name="Time">The clock.</param>
/// <param name="Workspace">Absolute path of the workspace folder (--dir, default the current folder).</param>
/// <param name="Json">True when --json was given.</param>
internal sealed record CommandContext(ParseResult Parse, TextWriter Out, TextWriter Err, TimeProvider Time, string Workspace, bool Json)
{
    /// <summary>True when --detail was given: the full sheet behind the answer.</summary>
    public bool Detail { get; init; }
}
