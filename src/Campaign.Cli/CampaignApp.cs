using System.CommandLine;
using Campaign.Cli.Commands;
using Campaign.Cli.Output;
using Campaign.Core.Domain;
using Campaign.App.Workspaces;

namespace Campaign.Cli;

/// <summary>
/// The composition root: builds the command tree, runs the chosen action, and turns failures into the
/// documented exit codes (0 ok, 1 usage, 2 bad input, 3 runtime failure).
/// </summary>
public sealed class CampaignApp
{
    private readonly TextWriter _out;
    private readonly TextWriter _err;
    private readonly TimeProvider _time;
    private readonly string _currentDirectory;

    /// <summary>Option --dir: the workspace folder (every command).</summary>
    internal static readonly Option<string> DirOption = new("--dir")
    {
        Description = "Workspace folder (default: the current folder)",
        Recursive = true,
        HelpName = "DIR",
    };

    /// <summary>Option --json: cluster-readable output (every command).</summary>
    internal static readonly Option<bool> JsonOption = new("--json")
    {
        Description = "Write one JSON document to standard output instead of tables",
        Recursive = true,
    };

    /// <summary>Option --detail: the full sheets (every command that has more to say than its answer).</summary>
    internal static readonly Option<bool> DetailOption = new("--detail")
    {
        Description = "Show the full sheet behind the answer (fit statistics, method, formulas, every column)",
        Recursive = true,
    };

    /// <summary>Option --plain-numbers: no thousands separators in tables (every command).</summary>
    internal static readonly Option<bool> PlainNumbersOption = new("--plain-numbers")
    {
        Description = "Print numbers without thousands separators (2500000, not 2,500,000)",
        Recursive = true,
    };

    /// <summary>Creates the app with its writers, clock and current folder (tests pass their own).</summary>
    public CampaignApp(TextWriter output, TextWriter error, TimeProvider time, string currentDirectory)
    {
        _out = output;
        _err = error;
        _time = time;
        _currentDirectory = currentDirectory;
    }

    /// <summary>The same app writing to other writers (for steps of the demo).</summary>
    internal CampaignApp With(TextWriter output, TextWriter error) => new(output, error, _time, _currentDirectory);

    /// <summary>Parses <paramref name="args"/>, runs the command and returns the exit code.</summary>
    public int Run(string[] args)
    {
        var root = BuildCommands();
        var parse = root.Parse(args);
        return parse.Invoke(new InvocationConfiguration { Output = _out, Error = _err, EnableDefaultExceptionHandler = false });
    }

    /// <summary>The command tree.</summary>
    internal RootCommand BuildCommands()
    {
        var root = new RootCommand(
            "campaign: plan, choose and run binary-black-hole simulation campaigns on shared clusters.\n" +
            "Estimates are estimates; the allocating site's charging rules and policies rule.")
        {
            DirOption,
            JsonOption,
            DetailOption,
            PlainNumbersOption,
        };
        root.Add(InitCommand.Build(this));
        root.Add(CheckCommand.Build(this));
        root.Add(LengthCommand.Build(this));
        root.Add(ClustersCommand.Build(this));
        root.Add(LogsCommand.Build(this));
        root.Add(ModelCommand.Build(this));
        root.Add(EstimateCommand.Build(this));
        root.Add(SelectCommand.Build(this));
        root.Add(PlanCommand.Build(this));
        root.Add(ForecastCommand.Build(this));
        root.Add(ReportCommand.Build(this));
        foreach (var command in TrackingCommands.Build(this))
        {
            root.Add(command);
        }
        root.Add(BackupCommand.Build(this));
        root.Add(DemoCommand.Build(this));
        return root;
    }

    /// <summary>Sets <paramref name="body"/> as the action of <paramref name="command"/>, with the error handling every command shares.</summary>
    internal void Bind(Command command, Func<CommandContext, int> body)
    {
        command.SetAction(parse =>
        {
            var json = parse.GetValue(JsonOption);
            var dir = Path.GetFullPath(parse.GetValue(DirOption) ?? ".", _currentDirectory);
            // Human output is kept within the screen's width; JSON goes out as it is.
            // (--detail asks for the full sheets, as wide as they are.)
            var detail = parse.GetValue(DetailOption);
            using var output = json ? null : new WrappingWriter(_out, detail ? Screen.Unbounded : Screen.WidthOf(_out));
            var context = new CommandContext(parse, (TextWriter?)output ?? _out, _err, _time, dir, json) { Detail = detail };
            using var numbers = Format.PlainNumbers(parse.GetValue(PlainNumbersOption));
            try
            {
                return body(context);
            }
            catch (UsageException e)
            {
                return Fail(context, ExitCodes.Usage, "usage", new[] { e.Message });
            }
            catch (InvalidInputException e)
            {
                return Fail(context, ExitCodes.BadInput, "bad_input", e.Problems);
            }
            catch (Exception e) when (StorageProblem.TryExplain(e, dir, out var message))
            {
                return Fail(context, ExitCodes.RuntimeFailure, "runtime_failure", new[] { message });
            }
            catch (Exception e) when (e is IOException or UnauthorizedAccessException or InvalidOperationException)
            {
                return Fail(context, ExitCodes.RuntimeFailure, "runtime_failure", new[] { e.Message });
            }
        });
    }

    /// <summary>Resolves a path typed by the user against the current folder.</summary>
    internal string Resolve(string path) => Path.GetFullPath(path, _currentDirectory);

    private static int Fail(CommandContext context, int code, string kind, IReadOnlyList<string> problems)
    {
        foreach (var problem in problems)
        {
            context.Err.WriteLine("campaign: error: " + problem);
        }

        if (code == ExitCodes.BadInput)
        {
            context.Err.WriteLine("campaign: nothing was changed.");
        }

        if (context.Json)
        {
            Json.Write(context.Out, new { Error = new { Kind = kind, ExitCode = code, Problems = problems } });
        }

        return code;
    }
}

/// <summary>A command line that parses but does not make sense (for example two options that exclude each other).</summary>
internal sealed class UsageException : Exception
{
    public UsageException(string message)
        : base(message)
    {
    }
}
