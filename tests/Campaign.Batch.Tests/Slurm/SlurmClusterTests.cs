using Campaign.Batch.Tests.Support;

namespace Campaign.Batch.Tests.Slurm;

/// <summary>The Slurm adapter against a real one-node Slurm cluster (started by .ci/slurm/start-cluster).</summary>
[Collection("slurm-fast")]
public sealed class SlurmClusterTests : IDisposable
{
    private readonly string _folder = Directory.CreateTempSubdirectory("campaign-slurm-job-").FullName;
    private readonly Jobs _jobs;

    public SlurmClusterTests()
    {
        _jobs = new Jobs(_folder);
        File.SetUnixFileMode(_folder, (UnixFileMode)Convert.ToInt32("777", 8));
    }

    public void Dispose() => Directory.Delete(_folder, true);

    [SlurmFact]
    public async Task A_leg_that_completes_reports_exit_0_and_its_environment_reaches_the_script()
    {
        using var cluster = SlurmCluster.Use();
        var slurm = SlurmAdapter.Create();
        var script = _jobs.Script("ok", "echo \"restart=$CAMPAIGN_RESTART\"; exit 0");
        var id = await slurm.SubmitAsync(_jobs.Request("ok", script, environment: new Dictionary<string, string> { ["CAMPAIGN_RESTART"] = "/ck/dir with space" }), CancellationToken.None);
        var status = (await Jobs.WaitFinal(slurm, new[] { id }, TimeSpan.FromSeconds(60)))[id];
        Assert.Equal(JobState.Succeeded, status.State);
        Assert.Equal(0, status.ExitCode);
        Assert.Equal(0, status.Signal);
        Assert.Equal(1, status.ChargedCores);
        Assert.Equal("cmp.t0.ok.leg001", status.Name);
        Assert.Equal("restart=/ck/dir with space\n", File.ReadAllText(Path.Combine(_folder, "ok.out")));
    }

    [SlurmFact]
    public async Task A_job_is_found_by_its_name_and_an_unknown_name_is_not()
    {
        using var cluster = SlurmCluster.Use();
        var slurm = SlurmAdapter.Create();
        var id = await slurm.SubmitAsync(_jobs.Request("findme", _jobs.Script("findme", "exit 0")), CancellationToken.None);
        Assert.Equal(id, await slurm.FindAsync(JobName.For("t0", "findme", 1), _jobs.Folder, CancellationToken.None));
        Assert.Null(await slurm.FindAsync(JobName.For("t0", "nobody-" + Guid.NewGuid().ToString("N")[..8], 1), _jobs.Folder, CancellationToken.None));
        // Regression (faults issue, item 1): a job of the same name in another folder is another workspace's.
        Assert.Null(await slurm.FindAsync(JobName.For("t0", "findme", 1), Path.Combine(_jobs.Folder, "elsewhere"), CancellationToken.None));
    }

    [SlurmFact]
    public async Task A_leg_that_fails_reports_its_exit_code()
    {
        using var cluster = SlurmCluster.Use();
        var slurm = SlurmAdapter.Create();
        var id = await slurm.SubmitAsync(_jobs.Request("fail", _jobs.Script("fail", "exit 3")), CancellationToken.None);
        var status = (await Jobs.WaitFinal(slurm, new[] { id }, TimeSpan.FromSeconds(60)))[id];
        Assert.Equal(JobState.Crashed, status.State);
        Assert.Equal(3, status.ExitCode);
    }

    [SlurmFact]
    public async Task A_cancelled_leg_is_reported_cancelled_and_cancelling_again_is_harmless()
    {
        using var cluster = SlurmCluster.Use();
        var slurm = SlurmAdapter.Create();
        var id = await slurm.SubmitAsync(_jobs.Request("cancel", _jobs.Script("cancel", "sleep 300")), CancellationToken.None);
        await Jobs.WaitFinal(slurm, new[] { id }, TimeSpan.FromSeconds(30), s => s.State == JobState.Working);
        await slurm.CancelAsync(id, CancellationToken.None);
        var status = (await Jobs.WaitFinal(slurm, new[] { id }, TimeSpan.FromSeconds(60)))[id];
        Assert.Equal(JobState.Stopped, status.State);
        await slurm.CancelAsync(id, CancellationToken.None);
    }

    [SlurmFact]
    public async Task An_afterany_chain_starts_the_next_leg_only_after_the_first_ends_in_any_state()
    {
        using var cluster = SlurmCluster.Use();
        var slurm = SlurmAdapter.Create();
        var first = await slurm.SubmitAsync(_jobs.Request("first", _jobs.Script("first", "sleep 3; date +%s%N > first.end; exit 1")), CancellationToken.None);
        var second = await slurm.SubmitAsync(_jobs.Request("second", _jobs.Script("second", "date +%s%N > second.start"), afterAny: first), CancellationToken.None);
        var pending = await slurm.QueryAsync(new[] { second }, CancellationToken.None);
        Assert.Equal(JobState.Waiting, pending[second].State);
        var statuses = await Jobs.WaitFinal(slurm, new[] { first, second }, TimeSpan.FromSeconds(90));
        Assert.Equal(JobState.Crashed, statuses[first].State);
        Assert.Equal(JobState.Succeeded, statuses[second].State);
        var end = long.Parse(File.ReadAllText(Path.Combine(_folder, "first.end")).Trim(), System.Globalization.CultureInfo.InvariantCulture);
        var start = long.Parse(File.ReadAllText(Path.Combine(_folder, "second.start")).Trim(), System.Globalization.CultureInfo.InvariantCulture);
        Assert.True(start > end);
    }

    [SlurmFact]
    public async Task Many_jobs_are_queried_with_one_command_and_unknown_ids_come_back_missing()
    {
        using var cluster = SlurmCluster.Use();
        var slurm = SlurmAdapter.Create();
        var script = _jobs.Script("many", "sleep 20");
        var ids = new List<string>();
        for (var i = 0; i < 5; i++)
        {
            ids.Add(await slurm.SubmitAsync(_jobs.Request("many" + i, script), CancellationToken.None));
        }

        var before = slurm.CommandsRun;
        var statuses = await slurm.QueryAsync(ids, CancellationToken.None);
        Assert.Equal(1, slurm.CommandsRun - before); // one squeue for all five
        Assert.Equal(ids.Count, statuses.Count);
        Assert.All(ids, id => Assert.True(statuses[id].State is JobState.Waiting or JobState.Working, statuses[id].NativeState));

        var withUnknown = await slurm.QueryAsync(ids.Append("999999").ToList(), CancellationToken.None);
        Assert.Equal(JobState.Vanished, withUnknown["999999"].State);
        foreach (var id in ids)
        {
            await slurm.CancelAsync(id, CancellationToken.None);
        }
    }
}

/// <summary>Slow Slurm tests (time limits are whole minutes; purges wait for MinJobAge): a collection of their own so they overlap with the rest.</summary>
[Collection("slurm-slow")]
public sealed class SlurmSlowTests : IDisposable
{
    private readonly string _folder = Directory.CreateTempSubdirectory("campaign-slurm-slow-").FullName;
    private readonly Jobs _jobs;

    public SlurmSlowTests()
    {
        _jobs = new Jobs(_folder);
        File.SetUnixFileMode(_folder, (UnixFileMode)Convert.ToInt32("777", 8));
    }

    public void Dispose() => Directory.Delete(_folder, true);

    [SlurmFact]
    public async Task A_leg_catches_the_warning_writes_a_checkpoint_and_times_out_and_a_purged_job_is_still_found()
    {
        using var cluster = SlurmCluster.Use();
        var slurm = SlurmAdapter.Create();
        var script = _jobs.Script("limit", "trap 'echo checkpoint > checkpoint.txt' USR1\nwhile true; do sleep 1; done");
        var id = await slurm.SubmitAsync(_jobs.Request("limit", script, minutes: 1, warning: new WarningSignal("USR1", 30)), CancellationToken.None);
        var shortId = await slurm.SubmitAsync(_jobs.Request("short", _jobs.Script("short", "exit 0")), CancellationToken.None);

        var status = (await Jobs.WaitFinal(slurm, new[] { id }, TimeSpan.FromSeconds(180)))[id];
        Assert.Equal(JobState.OutOfTime, status.State);
        Assert.Equal("checkpoint\n", File.ReadAllText(Path.Combine(_folder, "checkpoint.txt")));

        // The short job finished long ago; with MinJobAge=10 the controller purges it (its purge pass runs about
        // once a minute) and the final state must then come from the job-completion file.
        var purged = (await Jobs.WaitFinal(slurm, new[] { shortId }, TimeSpan.FromSeconds(120), s => s.Source == "jobcomp file"))[shortId];
        Assert.Equal("jobcomp file", purged.Source);
        Assert.Equal(JobState.Succeeded, purged.State);
        Assert.Equal(0, purged.ExitCode);
    }
}
