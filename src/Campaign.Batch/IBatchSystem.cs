namespace Campaign.Batch;

/// <summary>
/// The contract every batch-system adapter fulfils (local processes, Slurm, PBS).
/// <list type="bullet">
/// <item><see cref="SubmitAsync"/> queues one job leg and returns the batch system's job id.</item>
/// <item><see cref="QueryAsync"/> returns the status of many jobs in one call (one batch-system query per call,
/// however many ids), including final state, exit code, signal, elapsed time and charged cores once a job has
/// finished. An id the batch system no longer knows comes back as <see cref="JobState.Vanished"/>; a native state
/// the adapter does not know comes back as <see cref="JobState.Unrecognised"/>, never as finished.</item>
/// <item><see cref="CancelAsync"/> asks the batch system to cancel a job; cancelling a finished job is not an error.</item>
/// <item><see cref="FindAsync"/> looks a job up by its (unique) name and its working folder, so a host that crashed
/// between submitting and recording the id can find the job instead of submitting it twice, and never takes
/// another workspace's job for its own (a job whose batch system reports another working folder is not ours).</item>
/// </list>
/// Adapters are small and do not retry, wait or log: they let errors propagate as
/// <see cref="BatchSystemException"/>, classified transient (worth retrying) or permanent. Retries with backoff
/// and command timeouts are decorators owned by the host (<see cref="Resilience.ResilientBatchSystem"/>); a
/// timeout reaches the adapter as cancellation of <c>cancellationToken</c>. Commands run with argument lists,
/// never through a shell.
/// </summary>
public interface IBatchSystem
{
    /// <summary>Submits a job leg; returns its job id.</summary>
    Task<string> SubmitAsync(JobRequest request, CancellationToken cancellationToken);

    /// <summary>Statuses of every id in <paramref name="jobIds"/>, keyed by id, in one batch-system query.</summary>
    Task<IReadOnlyDictionary<string, JobStatus>> QueryAsync(IReadOnlyCollection<string> jobIds, CancellationToken cancellationToken);

    /// <summary>Cancels a job (a no-op for a job that has finished).</summary>
    Task CancelAsync(string jobId, CancellationToken cancellationToken);

    /// <summary>
    /// The id of the job named <paramref name="jobName"/> that runs in <paramref name="workingDirectory"/> (the newest
    /// if several), or null when there is none. Where the batch system does not report a job's folder, the name alone
    /// decides (names carry the workspace id).
    /// </summary>
    Task<string?> FindAsync(string jobName, string workingDirectory, CancellationToken cancellationToken);
}
