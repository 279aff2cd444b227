namespace Campaign.Batch.Resilience;

/// <summary>Retry and timeout settings of <see cref="ResilientBatchSystem"/>.</summary>
/// <param name="Attempts">Tries per call (first try included).</param>
/// <param name="FirstDelay">Wait before the second try; doubles each time.</param>
/// <param name="MaxDelay">Longest wait between tries.</param>
/// <param name="CommandTimeout">Longest one try may take before it is cancelled (counted as transient).</param>
public sealed record RetryOptions(int Attempts, TimeSpan FirstDelay, TimeSpan MaxDelay, TimeSpan CommandTimeout)
{
    /// <summary>5 tries, 2 s doubling to at most 60 s, 120 s per command.</summary>
    public static RetryOptions Default { get; } = new(5, TimeSpan.FromSeconds(2), TimeSpan.FromSeconds(60), TimeSpan.FromSeconds(120));
}

/// <summary>
/// The host's decorator around an adapter: a timeout on every call and retries with exponential backoff for
/// transient errors (and timeouts). Permanent errors pass through at once, unchanged. Submissions are retried
/// too, but never blindly: before a retry the job is looked up by its name (see <see cref="SubmitAsync"/>).
/// </summary>
public sealed class ResilientBatchSystem : IBatchSystem
{
    private readonly IBatchSystem _inner;
    private readonly RetryOptions _options;
    private readonly TimeProvider _time;

    /// <summary>Wraps <paramref name="inner"/>.</summary>
    public ResilientBatchSystem(IBatchSystem inner, RetryOptions options, TimeProvider time)
    {
        _inner = inner;
        _options = options;
        _time = time;
    }

    /// <summary>Calls that failed transiently and were tried again (for tests and reports).</summary>
    public int Retries { get; private set; }

    /// <summary>
    /// Submits; after a transient failure it first looks the job up by its name and returns the job found, so a
    /// submission that reached the batch system but whose answer was lost (a dropped connection, a timeout,
    /// garbled output) is never made twice.
    /// </summary>
    public Task<string> SubmitAsync(JobRequest request, CancellationToken cancellationToken)
    {
        var tried = false;
        return Run(
            async token =>
            {
                if (tried && await _inner.FindAsync(request.Name, request.WorkingDirectory, token).ConfigureAwait(false) is { } existing)
                {
                    Recovered++;
                    return existing;
                }

                tried = true;
                return await _inner.SubmitAsync(request, token).ConfigureAwait(false);
            },
            cancellationToken);
    }

    /// <summary>Submissions whose answer was lost and whose job was then found by name (for tests and reports).</summary>
    public int Recovered { get; private set; }

    /// <inheritdoc />
    public Task<IReadOnlyDictionary<string, JobStatus>> QueryAsync(IReadOnlyCollection<string> jobIds, CancellationToken cancellationToken) =>
        Run(token => _inner.QueryAsync(jobIds, token), cancellationToken);

    /// <inheritdoc />
    public Task CancelAsync(string jobId, CancellationToken cancellationToken) =>
        Run(
            async token =>
            {
                await _inner.CancelAsync(jobId, token).ConfigureAwait(false);
                return true;
            },
            cancellationToken);

    /// <inheritdoc />
    public Task<string?> FindAsync(string jobName, string workingDirectory, CancellationToken cancellationToken) =>
        Run(token => _inner.FindAsync(jobName, workingDirectory, token), cancellationToken);

    private async Task<T> Run<T>(Func<CancellationToken, Task<T>> call, CancellationToken cancellationToken)
    {
        var delay = _options.FirstDelay;
        for (var attempt = 1; ; attempt++)
        {
            using var timeout = new CancellationTokenSource(_options.CommandTimeout, _time);
            using var linked = CancellationTokenSource.CreateLinkedTokenSource(cancellationToken, timeout.Token);
            Exception failure;
            try
            {
                return await call(linked.Token).ConfigureAwait(false);
            }
            catch (BatchSystemException e) when (e.Kind == BatchErrorKind.Transient)
            {
                failure = e;
            }
            catch (OperationCanceledException e) when (timeout.IsCancellationRequested && !cancellationToken.IsCancellationRequested)
            {
                failure = new BatchSystemException(BatchErrorKind.Transient, $"the command did not answer within {_options.CommandTimeout.TotalSeconds:0} s", e);
            }

            if (attempt >= _options.Attempts)
            {
                throw new BatchSystemException(BatchErrorKind.Transient, $"gave up after {attempt} tries: {failure.Message}", failure);
            }

            Retries++;
            await Task.Delay(delay, _time, cancellationToken).ConfigureAwait(false);
            delay = TimeSpan.FromTicks(Math.Min(delay.Ticks * 2, _options.MaxDelay.Ticks));
        }
    }
}
