using System.Globalization;
using Campaign.Batch;

namespace Campaign.Cli.Tests.Reliability;

/// <summary>
/// Fault injection around a real adapter (hand-written: no batch system fails on cue). At a configured rate a
/// call fails transiently before it reaches the adapter (connection refused), hangs until the caller's timeout,
/// reaches the adapter and then loses its answer (the dangerous case for a submission), or returns garbled
/// output. One submission can be refused permanently. Seeded; shared across cycles so counts add up.
/// </summary>
internal sealed class FaultInjector
{
    private readonly Random _random;
    private readonly double _rate;
    private readonly object _gate = new();

    public FaultInjector(int seed, double rate, string? permanentlyRefused = null)
    {
        _random = new Random(seed);
        _rate = rate;
        PermanentlyRefused = permanentlyRefused;
    }

    public string? PermanentlyRefused { get; }

    public Dictionary<string, int> Injected { get; } = new(StringComparer.Ordinal);

    public int Calls { get; private set; }

    public int Total => Injected.Values.Sum();

    public IBatchSystem Around(IBatchSystem inner) => new Wrapper(this, inner);

    private (string Kind, double Draw) Next()
    {
        lock (_gate)
        {
            Calls++;
            var draw = _random.NextDouble();
            var kind = draw >= _rate ? "none" : draw < _rate * 0.35 ? "refused" : draw < _rate * 0.55 ? "hang" : draw < _rate * 0.8 ? "lost_answer" : "garbled";
            if (kind != "none")
            {
                Injected[kind] = Injected.GetValueOrDefault(kind) + 1;
            }

            return (kind, draw);
        }
    }

    /// <summary>Submissions that reached the batch system and whose answer was then lost.</summary>
    public int LostSubmissions { get; private set; }

    /// <summary>Every this-many-th submission reaches the batch system and loses its answer, whatever the draw.</summary>
    public int LoseEverySubmission { get; init; } = 4;

    private int _submissions;

    private async Task<T> Call<T>(Func<CancellationToken, Task<T>> call, CancellationToken token, bool submission = false)
    {
        var (kind, _) = Next();
        if (submission)
        {
            lock (_gate)
            {
                if (++_submissions % LoseEverySubmission == 0 && kind != "lost_answer")
                {
                    if (kind != "none")
                    {
                        Injected[kind]--;
                    }

                    kind = "lost_answer";
                    Injected[kind] = Injected.GetValueOrDefault(kind) + 1;
                }

                if (kind == "lost_answer")
                {
                    LostSubmissions++;
                }
            }
        }

        switch (kind)
        {
            case "refused":
                throw new BatchSystemException(BatchErrorKind.Transient, "injected: Connection refused");
            case "hang":
                await Task.Delay(Timeout.Infinite, token).ConfigureAwait(false);
                throw new InvalidOperationException("unreachable");
            case "lost_answer":
                await call(token).ConfigureAwait(false);
                throw new BatchSystemException(BatchErrorKind.Transient, "injected: Connection reset by peer (after the command ran)");
            case "garbled":
                throw new BatchSystemException(BatchErrorKind.Transient, "injected: squeue printed '\u0001\u0002 7|RUNN': expected 5 fields");
            default:
                return await call(token).ConfigureAwait(false);
        }
    }

    private sealed class Wrapper(FaultInjector faults, IBatchSystem inner) : IBatchSystem
    {
        public Task<string> SubmitAsync(JobRequest request, CancellationToken cancellationToken)
        {
            if (request.Name == faults.PermanentlyRefused)
            {
                lock (faults._gate)
                {
                    faults.Injected["permanent"] = faults.Injected.GetValueOrDefault("permanent") + 1;
                }

                throw new BatchSystemException(BatchErrorKind.Rejected, "sbatch: error: Batch job submission failed: Invalid account or account/partition combination specified");
            }

            return faults.Call(t => inner.SubmitAsync(request, t), cancellationToken, submission: true);
        }

        public Task<IReadOnlyDictionary<string, JobStatus>> QueryAsync(IReadOnlyCollection<string> jobIds, CancellationToken cancellationToken) =>
            faults.Call(t => inner.QueryAsync(jobIds, t), cancellationToken);

        public Task CancelAsync(string jobId, CancellationToken cancellationToken) =>
            faults.Call(
                async t =>
                {
                    await inner.CancelAsync(jobId, t).ConfigureAwait(false);
                    return true;
                },
                cancellationToken);

        public Task<string?> FindAsync(string jobName, string workingDirectory, CancellationToken cancellationToken) =>
            faults.Call(t => inner.FindAsync(jobName, workingDirectory, t), cancellationToken);
    }

    public override string ToString() =>
        $"{Total} faults in {Calls} calls (" + string.Join(", ", Injected.OrderBy(p => p.Key, StringComparer.Ordinal).Select(p => p.Key + " " + p.Value.ToString(CultureInfo.InvariantCulture)))
        + $"; {LostSubmissions.ToString(CultureInfo.InvariantCulture)} submissions lost their answer)";
}
