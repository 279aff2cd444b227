using Campaign.Batch.Processes;
using Campaign.Batch.Remote;
using Campaign.Batch.Tests.Support;

namespace Campaign.Batch.Tests.Remote;

/// <summary>
/// The workstation runner (a POSIX sh program) run for real by /bin/sh on this host through a local shell: the same
/// program and the same words the tracker sends over ssh, with real detached processes.
/// </summary>
public sealed class WorkstationRunnerTests : IDisposable
{
    private readonly string _folder = Directory.CreateTempSubdirectory("campaign-ws-runner-").FullName;
    private readonly Jobs _jobs;
    private readonly WorkstationBatchSystem _runner;

    public WorkstationRunnerTests()
    {
        _jobs = new Jobs(_folder);
        _runner = new WorkstationBatchSystem(new LocalShell(), Path.Combine(_folder, "runner"), cores: 2, grace: TimeSpan.FromSeconds(2));
    }

    public void Dispose() => Directory.Delete(_folder, true);

    [Fact]
    public async Task A_leg_that_completes_reports_exit_0_and_its_environment_reaches_the_script()
    {
        var script = _jobs.Script("ok", "echo \"restart=$CAMPAIGN_RESTART job=$CAMPAIGN_JOB_ID\"; exit 0");
        var id = await _runner.SubmitAsync(_jobs.Request("ok", script, environment: new Dictionary<string, string> { ["CAMPAIGN_RESTART"] = "/ck/dir with 'quote' and $(touch x)" }), CancellationToken.None);
        var status = (await Jobs.WaitFinal(_runner, new[] { id }, TimeSpan.FromSeconds(30)))[id];
        Assert.Equal(JobState.Succeeded, status.State);
        Assert.Equal(0, status.ExitCode);
        Assert.Equal($"restart=/ck/dir with 'quote' and $(touch x) job={id}\n", File.ReadAllText(Path.Combine(_folder, "ok.out")));
        Assert.False(File.Exists(Path.Combine(_folder, "x")));
    }

    [Fact]
    public async Task A_failing_leg_reports_its_code_and_a_job_is_found_by_name_and_folder_only()
    {
        var id = await _runner.SubmitAsync(_jobs.Request("fail", _jobs.Script("fail", "exit 3")), CancellationToken.None);
        var status = (await Jobs.WaitFinal(_runner, new[] { id }, TimeSpan.FromSeconds(30)))[id];
        Assert.Equal(JobState.Crashed, status.State);
        Assert.Equal(3, status.ExitCode);
        Assert.Equal(id, await _runner.FindAsync(JobName.For("t0", "fail", 1), _folder, CancellationToken.None));
        Assert.Null(await _runner.FindAsync(JobName.For("t0", "fail", 1), _folder + "/elsewhere", CancellationToken.None));
        Assert.Null(await _runner.FindAsync(JobName.For("t0", "nobody", 1), _folder, CancellationToken.None));
    }

    [Fact]
    public async Task The_wall_limit_sends_the_warning_then_ends_the_leg_as_out_of_time()
    {
        var script = _jobs.Script("long", "trap 'echo warned; exit 0' USR1; for i in $(seq 1 60); do sleep 1; done");
        var request = _jobs.Request("long", script) with { WallTime = TimeSpan.FromSeconds(6), Warning = new WarningSignal("USR1", 3) };
        var id = await _runner.SubmitAsync(request, CancellationToken.None);
        var status = (await Jobs.WaitFinal(_runner, new[] { id }, TimeSpan.FromSeconds(30)))[id];
        // The script checkpoints and exits on the warning (common practice for wall-time-limited codes).
        Assert.Equal(JobState.Succeeded, status.State);
        Assert.Contains("warned", File.ReadAllText(Path.Combine(_folder, "long.out")), StringComparison.Ordinal);

        var stubborn = _jobs.Script("stubborn", "trap '' USR1; sleep 60");
        var id2 = await _runner.SubmitAsync(_jobs.Request("stubborn", stubborn) with { WallTime = TimeSpan.FromSeconds(3) }, CancellationToken.None);
        var ended = (await Jobs.WaitFinal(_runner, new[] { id2 }, TimeSpan.FromSeconds(30)))[id2];
        Assert.Equal(JobState.OutOfTime, ended.State);
    }

    [Fact]
    public async Task Cancel_stops_a_running_leg_and_jobs_wait_for_free_cores_and_their_dependency()
    {
        var sleeper = _jobs.Script("sleeper", "sleep 60");
        var running = await _runner.SubmitAsync(_jobs.Request("sleeper", sleeper, cores: 2), CancellationToken.None);
        var after = await _runner.SubmitAsync(_jobs.Request("after", _jobs.Script("after", "exit 0"), afterAny: running), CancellationToken.None);
        var states = await Jobs.WaitFinal(_runner, new[] { running, after }, TimeSpan.FromSeconds(10), s => s.State != JobState.Waiting || s.JobId == after);
        Assert.Equal(JobState.Working, states[running].State);
        Assert.Equal(JobState.Waiting, states[after].State);

        await _runner.CancelAsync(running, CancellationToken.None);
        var final = await Jobs.WaitFinal(_runner, new[] { running, after }, TimeSpan.FromSeconds(30));
        Assert.Equal(JobState.Stopped, final[running].State);
        Assert.Equal(JobState.Succeeded, final[after].State);
        await _runner.CancelAsync(running, CancellationToken.None); // cancelling a finished job is harmless
    }

    [Fact]
    public async Task A_request_for_more_cores_than_the_workstation_has_is_refused_and_an_unknown_id_is_vanished()
    {
        var e = await Assert.ThrowsAsync<BatchSystemException>(() => _runner.SubmitAsync(_jobs.Request("big", _jobs.Script("big", "exit 0"), cores: 3), CancellationToken.None));
        Assert.Equal(BatchErrorKind.Rejected, e.Kind);
        Assert.Contains("needs 3 cores", e.Message, StringComparison.Ordinal);
        Assert.Equal(JobState.Vanished, (await _runner.QueryAsync(new[] { "999", "1;touch x" }, CancellationToken.None))["999"].State);
        Assert.False(File.Exists(Path.Combine(_folder, "x")));
    }
}
