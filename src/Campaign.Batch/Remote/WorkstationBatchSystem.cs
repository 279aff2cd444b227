using System.Globalization;
using System.Reflection;
using System.Text;
using Campaign.Batch.Processes;

namespace Campaign.Batch.Remote;

/// <summary>
/// A group workstation at another site, reached over SSH, that runs job legs as detached processes: the
/// workstation runner (<c>remote/workstation-runner.sh</c>, a POSIX sh program) keeps each job's state in files
/// under its folder on the workstation, starts a supervisor per job in its own session (wall-time limit, warning
/// signal, cancel, exit record) and runs queued jobs as cores free up. Every call sends the runner's text first on
/// standard input (kept on the workstation, replaced when it changed), so the workstation never runs an older
/// runner than the tracker's. One call per submission, one per query of any number of jobs. Linux only.
/// </summary>
public sealed class WorkstationBatchSystem : IBatchSystem
{
    private const int Refused = 4;

    private static readonly string Loader = Resource("remote/workstation-loader.sh");
    private static readonly string Runner = Resource("remote/workstation-runner.sh");

    private readonly IShell _shell;
    private readonly string _root;
    private readonly int _cores;
    private readonly TimeSpan _grace;

    /// <summary>A runner with its state in <paramref name="root"/> on the workstation, with <paramref name="cores"/> slots.</summary>
    public WorkstationBatchSystem(IShell shell, string root, int cores, TimeSpan? grace = null)
    {
        if (cores < 1)
        {
            throw new ArgumentOutOfRangeException(nameof(cores), cores, "The workstation runner needs at least one core.");
        }

        _shell = shell;
        _root = root;
        _cores = cores;
        _grace = grace ?? TimeSpan.FromSeconds(10);
    }

    /// <inheritdoc />
    public async Task<string> SubmitAsync(JobRequest request, CancellationToken cancellationToken)
    {
        request.Validate();
        var lines = new List<string>
        {
            "name=" + request.Name,
            "script=" + request.Script,
            "dir=" + request.WorkingDirectory,
            "cores=" + request.Cores.ToString(CultureInfo.InvariantCulture),
            "wall=" + ((long)Math.Ceiling(request.WallTime.TotalSeconds)).ToString(CultureInfo.InvariantCulture),
            "out=" + request.OutputPath,
            "err=" + request.ErrorPath,
            "after=" + (request.AfterAny ?? ""),
            "warn_signal=" + (request.Warning?.Signal ?? ""),
            "warn_seconds=" + (request.Warning?.SecondsBefore ?? 0).ToString(CultureInfo.InvariantCulture),
        };
        lines.AddRange(request.Environment.OrderBy(p => p.Key, StringComparer.Ordinal).Select(p => "env " + p.Key + "=" + p.Value));
        if (lines.FirstOrDefault(l => l.Contains('\n', StringComparison.Ordinal) || l.Contains('\r', StringComparison.Ordinal)) is { } broken)
        {
            throw new BatchSystemException(BatchErrorKind.Rejected, $"invalid job request: {broken.Split('=')[0]} has a line break: expected one line");
        }

        var result = await Run("submit", Array.Empty<string>(), string.Join("\n", lines) + "\n", cancellationToken).ConfigureAwait(false);
        return Ids(result).SingleOrDefault() ?? throw new BatchSystemException(BatchErrorKind.Transient, $"{_shell.Where}: the workstation runner did not say the job's id");
    }

    /// <inheritdoc />
    public async Task<IReadOnlyDictionary<string, JobStatus>> QueryAsync(IReadOnlyCollection<string> jobIds, CancellationToken cancellationToken)
    {
        var found = new Dictionary<string, JobStatus>(StringComparer.Ordinal);
        if (jobIds.Count == 0)
        {
            return found;
        }

        // The runner's ids are numbers; anything else is no job of its own (and is never sent).
        foreach (var id in jobIds.Where(id => id.Length == 0 || !id.All(char.IsAsciiDigit)))
        {
            found[id] = JobStatus.MissingFor(id);
        }

        var asked = jobIds.Where(id => !found.ContainsKey(id)).ToList();
        if (asked.Count == 0)
        {
            return found;
        }

        var result = await Run("query", asked, "", cancellationToken).ConfigureAwait(false);
        foreach (var line in result.StandardOutput.Split('\n', StringSplitOptions.RemoveEmptyEntries).Where(l => l.StartsWith("J ", StringComparison.Ordinal)))
        {
            var status = Status(line);
            found[status.JobId] = status;
        }

        if (jobIds.FirstOrDefault(id => !found.ContainsKey(id)) is { } lost)
        {
            throw new BatchSystemException(BatchErrorKind.Transient, $"{_shell.Where}: the workstation runner's answer has no line for job {lost} (cut short?)");
        }

        return found;
    }

    /// <inheritdoc />
    public async Task CancelAsync(string jobId, CancellationToken cancellationToken) =>
        await Run("cancel", new[] { jobId }, "", cancellationToken).ConfigureAwait(false);

    /// <inheritdoc />
    public async Task<string?> FindAsync(string jobName, string workingDirectory, CancellationToken cancellationToken)
    {
        var result = await Run("find", new[] { jobName, workingDirectory }, "", cancellationToken).ConfigureAwait(false);
        return Ids(result).LastOrDefault();
    }

    /// <summary>One line of the runner's query answer: "J id state code signal elapsed".</summary>
    public static JobStatus Status(string line)
    {
        var parts = line.Split(' ');
        var id = parts[1];
        int? Number(int i) => parts.Length > i && int.TryParse(parts[i], NumberStyles.Integer, CultureInfo.InvariantCulture, out var n) ? n : null;
        var native = parts.Length > 2 ? parts[2] : "";
        var state = native switch
        {
            "queued" => JobState.Waiting,
            "running" => JobState.Working,
            "succeeded" => JobState.Succeeded,
            "crashed" or "no_start" => JobState.Crashed,
            "out_of_time" => JobState.OutOfTime,
            "stopped" => JobState.Stopped,
            "vanished" or "missing" => JobState.Vanished,
            _ => JobState.Unrecognised,
        };
        if (native == "missing")
        {
            return JobStatus.MissingFor(id);
        }

        var elapsed = Number(5) is { } seconds ? TimeSpan.FromSeconds(seconds) : (TimeSpan?)null;
        var signal = Number(4) is { } s and > 0 ? s : (int?)null;
        return new JobStatus(id, state, native, state.IsFinal() ? Number(3) : null, signal, state.IsFinal() ? elapsed : null, null, null, "workstation runner");
    }

    private async Task<CommandResult> Run(string command, IReadOnlyList<string> arguments, string input, CancellationToken cancellationToken)
    {
        var words = new List<string>
        {
            "-c", Loader, "campaign-runner", _root, _cores.ToString(CultureInfo.InvariantCulture),
            ((int)Math.Ceiling(_grace.TotalSeconds)).ToString(CultureInfo.InvariantCulture), command,
        };
        words.AddRange(arguments);
        var stdin = new StringBuilder(Runner.Length + input.Length + 32).Append(Runner);
        if (!Runner.EndsWith('\n'))
        {
            stdin.Append('\n');
        }

        stdin.Append("__runner_end__\n").Append(input);
        var result = await _shell.RunAsync("sh", words, cancellationToken, input: stdin.ToString()).ConfigureAwait(false);
        return result.ExitCode switch
        {
            0 => result,
            Refused => throw new BatchSystemException(BatchErrorKind.Rejected, $"{_shell.Where}: {BatchErrorText.FirstLine(result.StandardError)}"),
            _ => throw new BatchSystemException(BatchErrorKind.Transient, $"{_shell.Where}: the workstation runner's {command} failed (exit {result.ExitCode}): {BatchErrorText.FirstLine(result.StandardError)}"),
        };
    }

    private static IEnumerable<string> Ids(CommandResult result) =>
        result.StandardOutput.Split('\n', StringSplitOptions.RemoveEmptyEntries).Where(l => l.StartsWith("ID ", StringComparison.Ordinal)).Select(l => l[3..].Trim());

    private static string Resource(string name)
    {
        using var stream = Assembly.GetExecutingAssembly().GetManifestResourceStream(name) ?? throw new InvalidOperationException($"missing resource {name}");
        using var reader = new StreamReader(stream);
        return reader.ReadToEnd();
    }
}
