using Campaign.Batch.Pbs;

namespace Campaign.Batch.Tests.Pbs;

/// <summary>
/// PBS parsers on output samples written from the PBS Professional and Torque documentation of qsub and
/// `qstat -f` (no PBS server is available to the project; the samples follow the documented layout).
/// </summary>
public class PbsParserTests
{
    private const string QstatSample =
        "Job Id: 1201.head01\n" +
        "    Job_Name = cmp.q4-a00.leg003\n" +
        "    Job_Owner = alice@login01\n" +
        "    resources_used.cput = 95:10:02\n" +
        "    resources_used.walltime = 23:59:41\n" +
        "    job_state = F\n" +
        "    queue = workq\n" +
        "    Exit_status = -29\n" +
        "    comment = Job run at Tue Jan 05 at 10:00 on (n001:ncpus=48) and finished; exceeded resource w\n" +
        "\talltime\n" +
        "    Resource_List.ncpus = 48\n" +
        "    Resource_List.walltime = 24:00:00\n" +
        "\n" +
        "Job Id: 1202.head01\n" +
        "    Job_Name = cmp.q4-a00.leg004\n" +
        "    job_state = R\n" +
        "    resources_used.walltime = 01:02:03\n" +
        "    Resource_List.ncpus = 48\n" +
        "\n" +
        "Job Id: 1203.head01\n" +
        "    Job_Name = cmp.q1.leg001\n" +
        "    job_state = F\n" +
        "    Exit_status = 0\n" +
        "    Resource_List.ncpus = 4\n" +
        "\n" +
        "Job Id: 1204.head01\n" +
        "    job_state = F\n" +
        "    Exit_status = 271\n";

    [Fact]
    public void Qsub_prints_the_job_id()
    {
        Assert.Equal("1201.head01", PbsParsers.QsubJobId("1201.head01\n"));
        Assert.Equal(BatchErrorKind.Transient, Assert.Throws<BatchSystemException>(() => PbsParsers.QsubJobId("qsub: submit error")).Kind);
    }

    [Fact]
    public void Qstat_full_output_gives_every_job_with_wrapped_values_joined()
    {
        var statuses = PbsParsers.QstatFull(QstatSample).ToDictionary(s => s.JobId);
        Assert.Equal(4, statuses.Count);
        Assert.Equal(JobState.OutOfTime, statuses["1201.head01"].State);
        Assert.Equal(new TimeSpan(23, 59, 41), statuses["1201.head01"].Elapsed);
        Assert.Equal(48, statuses["1201.head01"].ChargedCores);
        Assert.Equal("cmp.q4-a00.leg003", statuses["1201.head01"].Name);
        Assert.Equal(JobState.Working, statuses["1202.head01"].State);
        Assert.Equal(new JobStatus("1203.head01", JobState.Succeeded, "F", 0, 0, null, 4, "cmp.q1.leg001", "qstat"), statuses["1203.head01"]);
        Assert.Equal(JobState.Crashed, statuses["1204.head01"].State);
        Assert.Equal(15, statuses["1204.head01"].Signal); // 271 = 256 + SIGTERM
    }

    // Source: qstat job states in the PBS Professional reference guide (and Torque's C for completed).
    [Theory]
    [InlineData("Q", JobState.Waiting)]
    [InlineData("H", JobState.Waiting)]
    [InlineData("W", JobState.Waiting)]
    [InlineData("T", JobState.Waiting)]
    [InlineData("M", JobState.Waiting)]
    [InlineData("R", JobState.Working)]
    [InlineData("B", JobState.Working)]
    [InlineData("E", JobState.Working)]
    [InlineData("S", JobState.Paused)]
    [InlineData("U", JobState.Paused)]
    [InlineData("Z", JobState.Unrecognised)]
    public void Active_state_letters_map(string letter, JobState state)
    {
        Assert.Equal(state, PbsStates.Resolve(letter, null, null).State);
    }

    [Theory]
    [InlineData(0, JobState.Succeeded)]
    [InlineData(1, JobState.Crashed)]
    [InlineData(137, JobState.Crashed)]
    [InlineData(-1, JobState.Crashed)]
    [InlineData(-29, JobState.OutOfTime)]
    public void Finished_jobs_map_by_exit_status(int exit, JobState state)
    {
        Assert.Equal(state, PbsStates.Resolve("F", exit, null).State);
        Assert.Equal(state, PbsStates.Resolve("C", exit, null).State);
    }

    [Fact]
    public void A_finished_job_without_an_exit_status_is_unknown_never_done()
    {
        Assert.Equal(JobState.Unrecognised, PbsStates.Resolve("F", null, null).State);
    }

    [Fact]
    public void Unknown_ids_are_read_from_standard_error()
    {
        Assert.Equal(new[] { "99.head01" }, PbsParsers.UnknownIds("qstat: Unknown Job Id 99.head01\n"));
    }

    [Fact]
    public void Submit_arguments_request_cores_walltime_and_the_dependency()
    {
        var adapter = new PbsBatchSystem(new PbsOptions { Queue = "workq" });
        var request = new JobRequest("cmp.a.leg001", "/w/run.sh", "/w", 48, TimeSpan.FromHours(30), "/w/o", "/w/e", new Dictionary<string, string>(), "1201.head01");
        Assert.Equal(
            new[] { "-N", "cmp.a.leg001", "-o", "/w/o", "-e", "/w/e", "-l", "select=1:ncpus=48", "-l", "walltime=30:00:00", "-V", "-q", "workq", "-W", "depend=afterany:1201.head01", "/w/run.sh" },
            adapter.SubmitArguments(request));
    }
}
