using System.CommandLine;

namespace Campaign.Cli;

/// <summary>What a command's action needs: its parse result, the output writers, the clock and the workspace folder.</summary>
internal sealed class CommandContext
{
    public CommandContext(ParseResult parse, TextWriter output, TextWriter error, TimeProvider time, string workspace, bool json)
    {
        Parse = parse;
        Out = output;
        Err = error;
        Time = time;
        Workspace = workspace;
        Json = json;
    }

    public ParseResult Parse { get; }

    public TextWriter Out { get; }

    public TextWriter Err { get; }

    public TimeProvider Time { get; }

    /// <summary>Absolute path of the workspace folder (--dir, default the current folder).</summary>
    public string Workspace { get; }

    /// <summary>True when --json was given: write one JSON document to standard output.</summary>
    public bool Json { get; }

    /// <summary>Resolves a path the user typed against the current folder.</summary>
    public string Resolve(string path, string currentDirectory) => Path.GetFullPath(path, currentDirectory);
}
