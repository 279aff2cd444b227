using Campaign.Batch.Resilience;
using Microsoft.Extensions.Time.Testing;

namespace Campaign.Batch.Tests.Resilience;

/// <summary>
/// The host's retry/timeout decorator. The adapter here is a hand-written fake: no real batch system can be made
/// to fail on cue. Time is a fake clock, advanced by the test (nothing sleeps).
/// </summary>
public class ResilientBatchSystemTests
{
    private sealed class Flaky : IBatchSystem
    {
        private readonly Queue<Exception?> _script;

        public Flaky(params Exception?[] script) => _script = new Queue<Exception?>(script);

        public int Calls { get; private set; }

        public Task<string> SubmitAsync(JobRequest request, CancellationToken cancellationToken)
        {
            Calls++;
            return _script.TryDequeue(out var failure) && failure is not null ? Task.FromException<string>(failure) : Task.FromResult("17");
        }

        public async Task<IReadOnlyDictionary<string, JobStatus>> QueryAsync(IReadOnlyCollection<string> jobIds, CancellationToken cancellationToken)
        {
            Calls++;
            if (_script.TryDequeue(out var failure) && failure is not null)
            {
                if (failure is TimeoutException)
                {
                    await Task.Delay(Timeout.Infinite, cancellationToken); // hangs until the decorator's timeout
                }

                throw failure;
            }

            return jobIds.ToDictionary(id => id, id => new JobStatus(id, JobState.Working, "RUNNING"));
        }

        public Task CancelAsync(string jobId, CancellationToken cancellationToken)
        {
            Calls++;
            return Task.CompletedTask;
        }

        public Task<string?> FindAsync(string jobName, string workingDirectory, CancellationToken cancellationToken)
        {
            Calls++;
            return Task.FromResult<string?>(null);
        }
    }

    private static readonly RetryOptions Options = new(4, TimeSpan.FromSeconds(2), TimeSpan.FromSeconds(10), TimeSpan.FromSeconds(30));

    private static JobRequest Request() => new("cmp.a.leg001", "/w/a.sh", "/w", 1, TimeSpan.FromMinutes(5), "/w/o", "/w/e", new Dictionary<string, string>());

    private static async Task<T> Drive<T>(FakeTimeProvider time, Task<T> task)
    {
        while (!task.IsCompleted)
        {
            time.Advance(TimeSpan.FromSeconds(1));
            await Task.Yield();
            await Task.Delay(1);
        }

        return await task;
    }

    [Fact]
    public async Task Transient_failures_are_retried_with_backoff_until_they_pass()
    {
        var time = new FakeTimeProvider();
        var inner = new Flaky(new BatchSystemException(BatchErrorKind.Transient, "Socket timed out"), new BatchSystemException(BatchErrorKind.Transient, "Connection refused"));
        var resilient = new ResilientBatchSystem(inner, Options, time);
        var started = time.GetUtcNow();
        Assert.Equal("17", await Drive(time, resilient.SubmitAsync(Request(), CancellationToken.None)));
        Assert.Equal(5, inner.Calls); // three submissions, each retry preceded by a look-up by name that found nothing
        Assert.Equal(2, resilient.Retries);
        Assert.True(time.GetUtcNow() - started >= TimeSpan.FromSeconds(6)); // waited 2 s, then 4 s
    }

    [Fact]
    public async Task A_permanent_failure_surfaces_at_once_with_its_text()
    {
        var time = new FakeTimeProvider();
        var inner = new Flaky(new BatchSystemException(BatchErrorKind.Permanent, "sbatch: error: invalid partition"));
        var resilient = new ResilientBatchSystem(inner, Options, time);
        var error = await Assert.ThrowsAsync<BatchSystemException>(() => resilient.SubmitAsync(Request(), CancellationToken.None));
        Assert.Equal("sbatch: error: invalid partition", error.Message);
        Assert.Equal(1, inner.Calls);
    }

    [Fact]
    public async Task A_command_that_hangs_is_timed_out_and_retried()
    {
        var time = new FakeTimeProvider();
        var inner = new Flaky(new TimeoutException());
        var resilient = new ResilientBatchSystem(inner, Options, time);
        var statuses = await Drive(time, resilient.QueryAsync(new[] { "1" }, CancellationToken.None));
        Assert.Equal(JobState.Working, statuses["1"].State);
        Assert.Equal(2, inner.Calls);
    }

    [Fact]
    public async Task Giving_up_after_the_last_try_keeps_the_error_transient()
    {
        var time = new FakeTimeProvider();
        var failures = Enumerable.Range(0, 4).Select(_ => (Exception?)new BatchSystemException(BatchErrorKind.Transient, "Unable to contact slurm controller")).ToArray();
        var resilient = new ResilientBatchSystem(new Flaky(failures), Options, time);
        var task = resilient.SubmitAsync(Request(), CancellationToken.None);
        var error = await Assert.ThrowsAsync<BatchSystemException>(() => Drive(time, task));
        Assert.Equal(BatchErrorKind.Transient, error.Kind);
        Assert.Equal("gave up after 4 tries: Unable to contact slurm controller", error.Message);
    }

    /// <summary>A batch system that accepts the job and then loses the answer (the connection drops after sbatch ran).</summary>
    private sealed class LosesTheAnswer : IBatchSystem
    {
        private readonly Dictionary<string, string> _byName = new(StringComparer.Ordinal);

        public int Submissions { get; private set; }

        public Task<string> SubmitAsync(JobRequest request, CancellationToken cancellationToken)
        {
            Submissions++;
            _byName[request.Name] = (40 + Submissions).ToString(System.Globalization.CultureInfo.InvariantCulture);
            return Task.FromException<string>(new BatchSystemException(BatchErrorKind.Transient, "Connection reset by peer"));
        }

        public Task<IReadOnlyDictionary<string, JobStatus>> QueryAsync(IReadOnlyCollection<string> jobIds, CancellationToken cancellationToken) =>
            Task.FromResult<IReadOnlyDictionary<string, JobStatus>>(new Dictionary<string, JobStatus>());

        public Task CancelAsync(string jobId, CancellationToken cancellationToken) => Task.CompletedTask;

        public Task<string?> FindAsync(string jobName, string workingDirectory, CancellationToken cancellationToken) => Task.FromResult(_byName.GetValueOrDefault(jobName));
    }

    [Fact]
    public async Task A_submission_whose_answer_was_lost_is_found_by_name_and_never_made_twice()
    {
        var time = new FakeTimeProvider();
        var inner = new LosesTheAnswer();
        var resilient = new ResilientBatchSystem(inner, Options, time);
        Assert.Equal("41", await Drive(time, resilient.SubmitAsync(Request(), CancellationToken.None)));
        Assert.Equal(1, inner.Submissions);
        Assert.Equal(1, resilient.Recovered);
    }
}
