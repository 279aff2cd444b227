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
/// too, so an adapter's submit must be safe to repeat or the host must look the job up by name before a
/// retry (the tracking loop does).
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

    /// <inheritdoc />
    public Task<string> SubmitAsync(JobRequest request, CancellationToken cancellationToken) =>
        Run(token => _inner.SubmitAsync(request, token), cancellationToken);

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
    public Task<string?> FindAsync(string jobName, CancellationToken cancellationToken) =>
        Run(token => _inner.FindAsync(jobName, token), cancellationToken);

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
