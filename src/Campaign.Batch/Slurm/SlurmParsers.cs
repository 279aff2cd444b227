using System.Globalization;

namespace Campaign.Batch.Slurm;

/// <summary>
/// Parsers of Slurm command output. Each takes the text a command printed and throws
/// <see cref="BatchSystemException"/> (transient: output may have been cut) naming the bad token.
/// </summary>
public static class SlurmParsers
{
    /// <summary>The format Campaign asks of squeue: job id, state, name, CPUs, elapsed.</summary>
    public const string SqueueFormat = "%i|%T|%j|%C|%M";

    /// <summary>`sbatch --parsable` prints "jobid" or "jobid;cluster".</summary>
    public static string SbatchJobId(string output)
    {
        var line = output.Split('\n', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries).LastOrDefault() ?? "";
        var id = line.Split(';')[0];
        if (id.Length == 0 || !id.All(char.IsAsciiDigit))
        {
            throw new BatchSystemException(BatchErrorKind.Transient, $"sbatch printed '{Shorten(output)}': expected a job id (digits, optionally ';cluster')");
        }

        return id;
    }

    /// <summary>Lines of `squeue -h -o "%i|%T|%j|%C|%M"`: one status per job (elapsed "D-HH:MM:SS", "HH:MM:SS" or "MM:SS").</summary>
    public static IReadOnlyList<JobStatus> Squeue(string output)
    {
        var statuses = new List<JobStatus>();
        foreach (var raw in output.Split('\n'))
        {
            var line = raw.TrimEnd('\r');
            if (line.Trim().Length == 0)
            {
                continue;
            }

            var fields = line.Split('|');
            if (fields.Length != 5 || fields[0].Trim().Length == 0)
            {
                throw new BatchSystemException(BatchErrorKind.Transient, $"squeue printed '{Shorten(line)}': expected 5 fields id|state|name|cpus|elapsed");
            }

            var id = fields[0].Trim();
            statuses.Add(new JobStatus(id, SlurmStates.Parse(fields[1]), fields[1].Trim(), null, null, Duration(fields[4].Trim()), Integer(fields[3]), fields[2].Trim(), "squeue"));
        }

        return statuses;
    }

    /// <summary>
    /// Records of `scontrol -o show job` (one job per line, key=value tokens) or of the job-completion text file
    /// (the same form): id, state, exit code and signal, elapsed, CPUs and name.
    /// </summary>
    public static IReadOnlyList<JobStatus> KeyValueRecords(string output, string source)
    {
        var statuses = new List<JobStatus>();
        foreach (var raw in output.Split('\n'))
        {
            var line = raw.TrimEnd('\r');
            if (!line.StartsWith("JobId=", StringComparison.Ordinal))
            {
                continue;
            }

            var values = new Dictionary<string, string>(StringComparer.Ordinal);
            foreach (var token in line.Split(' ', StringSplitOptions.RemoveEmptyEntries))
            {
                var eq = token.IndexOf('=');
                if (eq > 0)
                {
                    values.TryAdd(token[..eq], token[(eq + 1)..]);
                }
            }

            var id = values["JobId"];
            if (!values.TryGetValue("JobState", out var state))
            {
                throw new BatchSystemException(BatchErrorKind.Transient, $"{source} record of job {id} has no JobState");
            }

            var (exit, signal) = values.TryGetValue("ExitCode", out var code) ? ExitCode(code) : (null, null);
            TimeSpan? elapsed = values.TryGetValue("RunTime", out var run) ? Duration(run) : Elapsed(values);
            var cpus = values.TryGetValue("NumCPUs", out var n) ? Integer(n) : values.TryGetValue("ProcCnt", out var p) ? Integer(p) : null;
            var name = values.TryGetValue("JobName", out var jn) ? jn : values.GetValueOrDefault("Name");
            statuses.Add(new JobStatus(id, SlurmStates.Parse(state), state, exit, signal, elapsed, cpus, name, source, values.GetValueOrDefault("WorkDir")));
        }

        return statuses;
    }

    /// <summary>Lines of `sacct -P -n -X --format=JobID,JobName,State,ExitCode,ElapsedRaw,AllocCPUS`.</summary>
    public static IReadOnlyList<JobStatus> Sacct(string output)
    {
        var statuses = new List<JobStatus>();
        foreach (var raw in output.Split('\n'))
        {
            var line = raw.TrimEnd('\r');
            if (line.Trim().Length == 0)
            {
                continue;
            }

            var fields = line.Split('|');
            if (fields.Length != 6)
            {
                throw new BatchSystemException(BatchErrorKind.Transient, $"sacct printed '{Shorten(line)}': expected 6 fields JobID|JobName|State|ExitCode|ElapsedRaw|AllocCPUS");
            }

            var (exit, signal) = ExitCode(fields[3]);
            TimeSpan? elapsed = long.TryParse(fields[4], NumberStyles.None, CultureInfo.InvariantCulture, out var seconds) ? TimeSpan.FromSeconds(seconds) : null;
            statuses.Add(new JobStatus(fields[0], SlurmStates.Parse(fields[2]), fields[2], exit, signal, elapsed, Integer(fields[5]), fields[1], "sacct"));
        }

        return statuses;
    }

    /// <summary>"exit:signal" as Slurm prints it.</summary>
    public static (int? Exit, int? Signal) ExitCode(string text)
    {
        var parts = text.Trim().Split(':');
        if (parts.Length == 2 && int.TryParse(parts[0], NumberStyles.None, CultureInfo.InvariantCulture, out var exit)
            && int.TryParse(parts[1], NumberStyles.None, CultureInfo.InvariantCulture, out var signal))
        {
            return (exit, signal);
        }

        throw new BatchSystemException(BatchErrorKind.Transient, $"exit code '{Shorten(text)}': expected exit:signal");
    }

    /// <summary>Slurm durations: "D-HH:MM:SS", "HH:MM:SS", "MM:SS" (and "INVALID", "UNLIMITED" or "N/A", which give null).</summary>
    public static TimeSpan? Duration(string text)
    {
        var days = 0;
        var rest = text;
        var dash = text.IndexOf('-');
        if (dash > 0)
        {
            if (!int.TryParse(text[..dash], NumberStyles.None, CultureInfo.InvariantCulture, out days))
            {
                return null;
            }

            rest = text[(dash + 1)..];
        }

        var parts = rest.Split(':');
        var numbers = new int[parts.Length];
        for (var i = 0; i < parts.Length; i++)
        {
            if (!int.TryParse(parts[i], NumberStyles.None, CultureInfo.InvariantCulture, out numbers[i]))
            {
                return null;
            }
        }

        return parts.Length switch
        {
            3 => new TimeSpan(days, numbers[0], numbers[1], numbers[2]),
            2 => new TimeSpan(days, 0, numbers[0], numbers[1]),
            _ => null,
        };
    }

    private static TimeSpan? Elapsed(IReadOnlyDictionary<string, string> values)
    {
        if (values.TryGetValue("StartTime", out var start) && values.TryGetValue("EndTime", out var end)
            && DateTime.TryParse(start, CultureInfo.InvariantCulture, DateTimeStyles.None, out var s)
            && DateTime.TryParse(end, CultureInfo.InvariantCulture, DateTimeStyles.None, out var e) && e >= s)
        {
            return e - s;
        }

        return null;
    }

    private static int? Integer(string text) => int.TryParse(text.Trim(), NumberStyles.None, CultureInfo.InvariantCulture, out var n) ? n : null;

    private static string Shorten(string text) => text.Length > 120 ? text[..120] + "..." : text.Trim();
}
