using System.Globalization;

namespace Campaign.Batch.Pbs;

/// <summary>
/// Parsers of PBS command output, written from the PBS Professional and Torque documentation (no PBS server was
/// available to test against).
/// </summary>
public static class PbsParsers
{
    /// <summary>`qsub` prints the job id, e.g. "1234.server".</summary>
    public static string QsubJobId(string output)
    {
        var id = output.Split('\n', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries).LastOrDefault() ?? "";
        if (id.Length == 0 || !char.IsAsciiDigit(id[0]) || id.Any(char.IsWhiteSpace))
        {
            throw new BatchSystemException(BatchErrorKind.Transient, $"qsub printed '{output.Trim()}': expected a job id such as 1234.server");
        }

        return id;
    }

    /// <summary>
    /// `qstat -x -f` blocks: "Job Id: ID" then indented "key = value" lines; a value may continue on lines that
    /// start with a tab.
    /// </summary>
    public static IReadOnlyList<JobStatus> QstatFull(string output)
    {
        var statuses = new List<JobStatus>();
        string? id = null;
        var values = new Dictionary<string, string>(StringComparer.Ordinal);
        string? lastKey = null;

        void Flush()
        {
            if (id is null)
            {
                return;
            }

            if (!values.TryGetValue("job_state", out var letter))
            {
                throw new BatchSystemException(BatchErrorKind.Transient, $"qstat printed job {id} without job_state");
            }

            var exitText = values.GetValueOrDefault("Exit_status") ?? values.GetValueOrDefault("exit_status");
            int? exit = exitText is not null && int.TryParse(exitText, NumberStyles.AllowLeadingSign, CultureInfo.InvariantCulture, out var e) ? e : null;
            var (state, code, signal) = PbsStates.Resolve(letter, exit, values.GetValueOrDefault("comment"));
            var walltime = values.GetValueOrDefault("resources_used.walltime");
            var cores = values.GetValueOrDefault("Resource_List.ncpus") ?? values.GetValueOrDefault("resources_used.ncpus");
            statuses.Add(new JobStatus(
                id,
                state,
                letter,
                code,
                signal,
                walltime is null ? null : Walltime(walltime),
                cores is not null && int.TryParse(cores, NumberStyles.None, CultureInfo.InvariantCulture, out var n) ? n : null,
                values.GetValueOrDefault("Job_Name"),
                "qstat"));
            values.Clear();
            id = null;
        }

        foreach (var raw in output.Split('\n'))
        {
            var line = raw.TrimEnd('\r');
            if (line.StartsWith("Job Id:", StringComparison.Ordinal))
            {
                Flush();
                id = line["Job Id:".Length..].Trim();
                continue;
            }

            if (line.StartsWith('\t') && lastKey is not null && id is not null)
            {
                values[lastKey] += line.Trim();
                continue;
            }

            var eq = line.IndexOf(" = ", StringComparison.Ordinal);
            if (eq > 0 && id is not null)
            {
                lastKey = line[..eq].Trim();
                values[lastKey] = line[(eq + 3)..].Trim();
            }
        }

        Flush();
        return statuses;
    }

    /// <summary>PBS walltimes "HH:MM:SS" (hours may exceed 24).</summary>
    public static TimeSpan? Walltime(string text)
    {
        var parts = text.Split(':');
        if (parts.Length == 3 && int.TryParse(parts[0], NumberStyles.None, CultureInfo.InvariantCulture, out var h)
            && int.TryParse(parts[1], NumberStyles.None, CultureInfo.InvariantCulture, out var m)
            && int.TryParse(parts[2], NumberStyles.None, CultureInfo.InvariantCulture, out var s))
        {
            return new TimeSpan(h, m, s);
        }

        return null;
    }

    /// <summary>Ids that `qstat` reported as unknown on standard error ("qstat: Unknown Job Id 1234.server").</summary>
    public static IReadOnlyList<string> UnknownIds(string standardError) =>
        standardError.Split('\n')
            .Select(l => l.Trim())
            .Where(l => l.Contains("Unknown Job Id", StringComparison.OrdinalIgnoreCase))
            .Select(l => l[(l.IndexOf("Unknown Job Id", StringComparison.OrdinalIgnoreCase) + "Unknown Job Id".Length)..].Trim().Split(' ')[0])
            .ToList();
}
