using System.Globalization;
using Campaign.Batch.Local;
using Campaign.Batch.Tests.Support;

namespace Campaign.Batch.Tests.Local;

/// <summary>The local runner with real detached processes, signals and files.</summary>
public sealed class LocalRunnerTests : IDisposable
{
    private readonly string _root = Directory.CreateTempSubdirectory("campaign-local-").FullName;
    private readonly Jobs _jobs;

    public LocalRunnerTests()
    {
        Directory.CreateDirectory(Path.Combine(_root, "work"));
        _jobs = new Jobs(Path.Combine(_root, "work"));
    }

    public void Dispose() => Directory.Delete(_root, true);

    private string State => Path.Combine(_root, "state");

    private JobRequest Request(string name, string body, double seconds = 60, string? afterAny = null, WarningSignal? warning = null, int cores = 1, Dictionary<string, string>? environment = null) =>
        _jobs.Request(name, _jobs.Script(name, body), afterAny: afterAny, warning: warning, cores: cores, environment: environment) with { WallTime = TimeSpan.FromSeconds(seconds) };

    [Fact]
    public async Task A_leg_that_completes_reports_exit_0_with_its_output_and_environment()
    {
        var runner = LocalRunner.Create(State);
        var id = await runner.SubmitAsync(Request("ok", "echo \"restart=$CAMPAIGN_RESTART\"; echo oops >&2", environment: new() { ["CAMPAIGN_RESTART"] = "/ck/a b" }), CancellationToken.None);
        var status = (await Jobs.WaitFinal(runner, new[] { id }, TimeSpan.FromSeconds(30)))[id];
        Assert.Equal(JobState.Succeeded, status.State);
        Assert.Equal(0, status.ExitCode);
        Assert.Equal(1, status.ChargedCores);
        Assert.Equal("restart=/ck/a b\n", File.ReadAllText(Path.Combine(_jobs.Folder, "ok.out")));
        Assert.Equal("oops\n", File.ReadAllText(Path.Combine(_jobs.Folder, "ok.err")));
    }

    [Fact]
    public async Task A_leg_that_fails_reports_its_exit_code()
    {
        var runner = LocalRunner.Create(State);
        var id = await runner.SubmitAsync(Request("fail", "exit 3"), CancellationToken.None);
        var status = (await Jobs.WaitFinal(runner, new[] { id }, TimeSpan.FromSeconds(30)))[id];
        Assert.Equal(JobState.Crashed, status.State);
        Assert.Equal(3, status.ExitCode);
    }

    [Fact]
    public async Task The_limit_sends_the_warning_then_TERM_then_KILL_to_the_whole_process_group()
    {
        var runner = LocalRunner.Create(State);
        // The script checkpoints on USR1, ignores TERM, and leaves a grandchild behind: all must end.
        var body = "trap 'echo checkpoint > checkpoint.txt' USR1\ntrap '' TERM\nsleep 300 &\necho $! > grandchild.pid\nwhile true; do sleep 0.2; done";
        var id = await runner.SubmitAsync(Request("limit", body, seconds: 3, warning: new WarningSignal("USR1", 2)), CancellationToken.None);
        var status = (await Jobs.WaitFinal(runner, new[] { id }, TimeSpan.FromSeconds(30)))[id];
        Assert.Equal(JobState.OutOfTime, status.State);
        Assert.Equal(9, status.Signal);
        Assert.Equal("checkpoint\n", File.ReadAllText(Path.Combine(_jobs.Folder, "checkpoint.txt")));
        var grandchild = int.Parse(File.ReadAllText(Path.Combine(_jobs.Folder, "grandchild.pid")).Trim(), CultureInfo.InvariantCulture);
        Assert.Null(Posix.StartTicks(grandchild));
        Assert.InRange(status.Elapsed!.Value.TotalSeconds, 3, 10);
    }

    [Fact]
    public async Task A_cancelled_leg_ends_and_cancelling_again_is_harmless()
    {
        var runner = LocalRunner.Create(State);
        var id = await runner.SubmitAsync(Request("cancel", "sleep 300"), CancellationToken.None);
        await Jobs.WaitFinal(runner, new[] { id }, TimeSpan.FromSeconds(20), s => s.State == JobState.Working);
        await runner.CancelAsync(id, CancellationToken.None);
        var status = (await Jobs.WaitFinal(runner, new[] { id }, TimeSpan.FromSeconds(20)))[id];
        Assert.Equal(JobState.Stopped, status.State);
        await runner.CancelAsync(id, CancellationToken.None);
    }

    [Fact]
    public async Task Jobs_wait_for_free_cores_and_for_their_afterany_dependency()
    {
        var runner = LocalRunner.Create(State, cores: 2);
        var a = await runner.SubmitAsync(Request("a", "sleep 2; exit 1", cores: 2), CancellationToken.None);
        var b = await runner.SubmitAsync(Request("b", "date +%s%N > b.start", afterAny: a), CancellationToken.None);
        var c = await runner.SubmitAsync(Request("c", "exit 0"), CancellationToken.None);
        var early = await runner.QueryAsync(new[] { a, b, c }, CancellationToken.None);
        Assert.Equal(JobState.Working, early[a].State);
        Assert.Equal(JobState.Waiting, early[b].State); // waits for a
        Assert.Equal(JobState.Waiting, early[c].State); // no free core while a holds both
        var final = await Jobs.WaitFinal(runner, new[] { a, b, c }, TimeSpan.FromSeconds(30));
        Assert.Equal(JobState.Crashed, final[a].State);
        Assert.Equal(JobState.Succeeded, final[b].State);
        Assert.Equal(JobState.Succeeded, final[c].State);
    }

    [Fact]
    public async Task A_restarted_host_finds_running_jobs_and_jobs_that_ended_while_it_was_away()
    {
        var first = LocalRunner.Create(State);
        var id = await first.SubmitAsync(Request("survive", "sleep 2; exit 0"), CancellationToken.None);
        Assert.Equal(JobState.Working, (await first.QueryAsync(new[] { id }, CancellationToken.None))[id].State);

        // A new runner over the same folder, as after a crash of the host.
        var second = LocalRunner.Create(State);
        Assert.Equal(JobState.Working, (await second.QueryAsync(new[] { id }, CancellationToken.None))[id].State);
        await Task.Delay(3000);
        var third = LocalRunner.Create(State);
        Assert.Equal(JobState.Succeeded, (await third.QueryAsync(new[] { id }, CancellationToken.None))[id].State);
    }

    [Fact]
    public async Task A_reused_pid_is_not_mistaken_for_the_job()
    {
        var runner = LocalRunner.Create(State);
        var id = await runner.SubmitAsync(Request("reuse", "exit 0", cores: 1), CancellationToken.None);
        await Jobs.WaitFinal(runner, new[] { id }, TimeSpan.FromSeconds(30));
        var folder = Path.Combine(State, "jobs", id);
        File.Delete(Path.Combine(folder, "exit.json"));
        // Pretend the supervisor's pid now belongs to another process (pid 1 is alive, with another start time).
        File.WriteAllText(Path.Combine(folder, "supervisor.pid"), "1 999999999");
        File.WriteAllText(Path.Combine(folder, "script.pid"), "1 999999999");
        var status = (await runner.QueryAsync(new[] { id }, CancellationToken.None))[id];
        Assert.Equal(JobState.Vanished, status.State);
        Assert.Equal("ended without an exit record", status.NativeState);
    }

    [Fact]
    public async Task A_job_is_found_by_its_name_in_its_folder_and_never_in_another_folder()
    {
        var runner = LocalRunner.Create(State);
        var id = await runner.SubmitAsync(Request("named", "exit 0"), CancellationToken.None);
        Assert.Equal(id, await runner.FindAsync(JobName.For("t0", "named", 1), _jobs.Folder, CancellationToken.None));
        Assert.Null(await runner.FindAsync(JobName.For("t0", "never", 1), _jobs.Folder, CancellationToken.None));
        // Regression (faults issue, item 1): a job of the same name in another folder is another workspace's.
        Assert.Null(await runner.FindAsync(JobName.For("t0", "named", 1), Path.Combine(_jobs.Folder, "elsewhere"), CancellationToken.None));
    }

    [Fact]
    public async Task Unknown_ids_are_missing_and_jobs_larger_than_the_runner_are_refused()
    {
        var runner = LocalRunner.Create(State, cores: 2);
        Assert.Equal(JobState.Vanished, (await runner.QueryAsync(new[] { "42" }, CancellationToken.None))["42"].State);
        var error = await Assert.ThrowsAsync<BatchSystemException>(() => runner.SubmitAsync(Request("big", "exit 0", cores: 3), CancellationToken.None));
        Assert.Equal(BatchErrorKind.Rejected, error.Kind);
        Assert.Equal("the job needs 3 cores; the local runner has 2", error.Message);
    }
}
