using System.Globalization;
using Campaign.Batch.Processes;

namespace Campaign.Batch.Pbs;

/// <summary>
/// PBS family adapter (PBS Professional, OpenPBS; Torque where the syntax agrees): `qsub` with a
/// select/ncpus request, `qstat -x -f` for many jobs at once (finished jobs included), `qdel`. qsub runs in the
/// job's working folder, so $PBS_O_WORKDIR names it (PBS starts the script in the home folder; scripts should
/// `cd "$PBS_O_WORKDIR"`). PBS has no pre-limit warning signal: a request's warning is not sent, and the job
/// gets SIGTERM at the limit. Written and tested against documented output only: no PBS server was available.
/// </summary>
public sealed class PbsBatchSystem : IBatchSystem
{
    private readonly PbsOptions _options;
    private readonly IShell _runner;

    /// <summary>Creates the adapter; its commands run through <paramref name="shell"/> (this host when null).</summary>
    public PbsBatchSystem(PbsOptions options, IShell? shell = null)
    {
        _options = options;
        _runner = shell ?? new LocalShell();
    }

    /// <summary>The qsub arguments for a request (the script last).</summary>
    public IReadOnlyList<string> SubmitArguments(JobRequest request)
    {
        var wall = request.WallTime;
        var arguments = new List<string>
        {
            "-N", request.Name,
            "-o", request.OutputPath,
            "-e", request.ErrorPath,
            "-l", request.Nodes is { } nodes
                ? $"select={nodes.ToString(CultureInfo.InvariantCulture)}:ncpus={((request.Cores + nodes - 1) / nodes).ToString(CultureInfo.InvariantCulture)}"
                : $"select=1:ncpus={request.Cores.ToString(CultureInfo.InvariantCulture)}",
            "-l", $"walltime={((int)wall.TotalHours).ToString("D2", CultureInfo.InvariantCulture)}:{wall.Minutes.ToString("D2", CultureInfo.InvariantCulture)}:{wall.Seconds.ToString("D2", CultureInfo.InvariantCulture)}",
            "-V",
        };
        if (_options.Queue is { } queue)
        {
            arguments.AddRange(new[] { "-q", queue });
        }

        if (_options.Account is { } account)
        {
            arguments.AddRange(new[] { "-A", account });
        }

        if (request.AfterAny is { } after)
        {
            arguments.AddRange(new[] { "-W", "depend=afterany:" + after });
        }

        arguments.Add(request.Script);
        return arguments;
    }

    /// <inheritdoc />
    public async Task<string> SubmitAsync(JobRequest request, CancellationToken cancellationToken)
    {
        request.Validate();
        var result = await _runner.RunAsync(Command("qsub"), SubmitArguments(request), cancellationToken, request.Environment, request.WorkingDirectory).ConfigureAwait(false);
        if (result.ExitCode != 0)
        {
            throw Classify("qsub", result);
        }

        return PbsParsers.QsubJobId(result.StandardOutput);
    }

    /// <inheritdoc />
    public async Task<IReadOnlyDictionary<string, JobStatus>> QueryAsync(IReadOnlyCollection<string> jobIds, CancellationToken cancellationToken)
    {
        var found = new Dictionary<string, JobStatus>(StringComparer.Ordinal);
        if (jobIds.Count == 0)
        {
            return found;
        }

        var result = await _runner.RunAsync(Command("qstat"), new[] { "-x", "-f" }.Concat(jobIds).ToList(), cancellationToken).ConfigureAwait(false);
        var unknown = PbsParsers.UnknownIds(result.StandardError);
        if (result.ExitCode != 0 && unknown.Count == 0)
        {
            throw Classify("qstat", result);
        }

        foreach (var status in PbsParsers.QstatFull(result.StandardOutput))
        {
            found[status.JobId] = status;
        }

        foreach (var id in jobIds.Where(id => !found.ContainsKey(id)))
        {
            found[id] = JobStatus.MissingFor(id);
        }

        return found;
    }

    /// <inheritdoc />
    public async Task CancelAsync(string jobId, CancellationToken cancellationToken)
    {
        var result = await _runner.RunAsync(Command("qdel"), new[] { jobId }, cancellationToken).ConfigureAwait(false);
        var text = result.StandardError + result.StandardOutput;
        if (result.ExitCode != 0 && !text.Contains("Unknown Job Id", StringComparison.OrdinalIgnoreCase)
            && !text.Contains("finished", StringComparison.OrdinalIgnoreCase))
        {
            throw Classify("qdel", result);
        }
    }

    /// <inheritdoc />
    public async Task<string?> FindAsync(string jobName, string workingDirectory, CancellationToken cancellationToken)
    {
        // qselect cannot filter by folder; the name, which carries the workspace id, decides (docs/batch-systems.md).
        _ = workingDirectory;
        // qselect -x -N NAME lists the ids of jobs (finished ones included) with that name.
        var result = await _runner.RunAsync(Command("qselect"), new[] { "-x", "-N", jobName }, cancellationToken).ConfigureAwait(false);
        if (result.ExitCode != 0)
        {
            throw Classify("qselect", result);
        }

        return result.StandardOutput.Split('\n', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries).LastOrDefault();
    }

    private string Command(string name) => _options.CommandFolder is { } folder ? folder.TrimEnd('/') + "/" + name : name;

    private static BatchSystemException Classify(string command, CommandResult result)
    {
        var text = (result.StandardError + " " + result.StandardOutput).Trim();
        var transient = new[] { "cannot connect to server", "Connection refused", "timed out", "try again", "communication failure" }
            .Any(m => text.Contains(m, StringComparison.OrdinalIgnoreCase));
        // qsub's refusals of one job's request (wording from memory of OpenPBS/Torque messages, not checked on a live server).
        var rejected = !transient && command == "qsub" && new[] { "exceeds", "violates", "Illegal attribute or resource value", "Unknown resource" }
            .Any(m => text.Contains(m, StringComparison.OrdinalIgnoreCase));
        return new BatchSystemException(transient ? BatchErrorKind.Transient : rejected ? BatchErrorKind.Rejected : BatchErrorKind.Permanent, $"{command} exited with {result.ExitCode}: {text}");
    }
}
