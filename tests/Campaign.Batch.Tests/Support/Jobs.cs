namespace Campaign.Batch.Tests.Support;

/// <summary>Writes small batch scripts into a folder and waits for jobs (polling; these tests run real jobs).</summary>
public sealed class Jobs
{
    private readonly string _folder;

    public Jobs(string folder) => _folder = folder;

    public string Folder => _folder;

    /// <summary>An executable bash script with the given body.</summary>
    public string Script(string name, string body)
    {
        var path = Path.Combine(_folder, name + ".sh");
        File.WriteAllText(path, "#!/bin/bash\n" + body + "\n");
        File.SetUnixFileMode(path, UnixFileMode.UserRead | UnixFileMode.UserWrite | UnixFileMode.UserExecute | UnixFileMode.GroupRead | UnixFileMode.GroupExecute | UnixFileMode.OtherRead | UnixFileMode.OtherExecute);
        return path;
    }

    /// <summary>A request for a script with a one-minute default limit.</summary>
    public JobRequest Request(string name, string script, int minutes = 1, string? afterAny = null, WarningSignal? warning = null, int cores = 1, IReadOnlyDictionary<string, string>? environment = null) =>
        new(JobName.For("t0", name, 1), script, _folder, cores, TimeSpan.FromMinutes(minutes), Path.Combine(_folder, name + ".out"), Path.Combine(_folder, name + ".err"),
            environment ?? new Dictionary<string, string>(), afterAny, warning);

    /// <summary>Polls until every job is final (or <paramref name="limit"/> passes); returns the last statuses.</summary>
    public static async Task<IReadOnlyDictionary<string, JobStatus>> WaitFinal(IBatchSystem batch, IReadOnlyCollection<string> ids, TimeSpan limit, Func<JobStatus, bool>? done = null)
    {
        done ??= s => s.State.IsFinal();
        var deadline = DateTime.UtcNow + limit;
        while (true)
        {
            var statuses = await batch.QueryAsync(ids, CancellationToken.None);
            if (ids.All(id => done(statuses[id])) || DateTime.UtcNow > deadline)
            {
                return statuses;
            }

            await Task.Delay(500);
        }
    }
}
