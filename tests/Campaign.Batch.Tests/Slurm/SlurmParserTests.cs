using Campaign.Batch.Processes;
using Campaign.Batch.Slurm;

namespace Campaign.Batch.Tests.Slurm;

/// <summary>Parsers on output captured from Slurm 22.05 (Debian 12) and on forms documented in the Slurm man pages.</summary>
public class SlurmParserTests
{
    [Theory]
    [InlineData("1234\n", "1234")]
    [InlineData("1234;cluster2\n", "1234")] // sbatch --parsable: "jobid[;cluster]" (Slurm documentation)
    public void Sbatch_parsable_output_gives_the_job_id(string output, string id)
    {
        Assert.Equal(id, SlurmParsers.SbatchJobId(output));
    }

    [Fact]
    public void Garbled_sbatch_output_is_a_transient_error_naming_it()
    {
        var error = Assert.Throws<BatchSystemException>(() => SlurmParsers.SbatchJobId("Submitted batch job"));
        Assert.Equal(BatchErrorKind.Transient, error.Kind);
        Assert.Equal("sbatch printed 'Submitted batch job': expected a job id (digits, optionally ';cluster')", error.Message);
    }

    [Fact]
    public void Squeue_lines_give_states_names_cpus_and_elapsed()
    {
        const string output = "7|RUNNING|cmp.q2-a04.leg001|4|1-02:03:04\n8|PENDING|cmp.q2-a04.leg002|4|0:00\n9|COMPLETING|x|1|12:34\n";
        var statuses = SlurmParsers.Squeue(output);
        Assert.Equal(3, statuses.Count);
        Assert.Equal(new JobStatus("7", JobState.Working, "RUNNING", null, null, new TimeSpan(1, 2, 3, 4), 4, "cmp.q2-a04.leg001", "squeue"), statuses[0]);
        Assert.Equal(JobState.Waiting, statuses[1].State);
        Assert.Equal(TimeSpan.Zero, statuses[1].Elapsed);
        Assert.Equal(JobState.Working, statuses[2].State);
        Assert.Equal(new TimeSpan(0, 12, 34), statuses[2].Elapsed);
    }

    [Fact]
    public void Scontrol_oneliner_gives_exit_code_signal_runtime_and_cpus()
    {
        // Captured from `scontrol -o show job` on Slurm 22.05 (shortened: fields not used are cut).
        const string output = "JobId=1 JobName=j.sh UserId=root(0) JobState=FAILED Reason=NonZeroExitCode Dependency=(null) Requeue=1 Restarts=0 ExitCode=3:0 RunTime=00:00:07 TimeLimit=UNLIMITED NumNodes=1 NumCPUs=2 NumTasks=1 Command=/tmp/j.sh\n"
            + "JobId=2 JobName=k JobState=CANCELLED Reason=None ExitCode=0:15 RunTime=00:01:05 NumCPUs=1\n";
        var statuses = SlurmParsers.KeyValueRecords(output, "scontrol");
        Assert.Equal(new JobStatus("1", JobState.Crashed, "FAILED", 3, 0, TimeSpan.FromSeconds(7), 2, "j.sh", "scontrol"), statuses[0]);
        Assert.Equal(JobState.Stopped, statuses[1].State);
        Assert.Equal(15, statuses[1].Signal);
    }

    [Fact]
    public void Job_completion_file_records_give_state_exit_and_elapsed_from_start_and_end()
    {
        // Captured from jobcomp/filetxt on Slurm 22.05.
        const string output = "JobId=1 UserId=root(0) GroupId=root(0) Name=j.sh JobState=FAILED Partition=test TimeLimit=UNLIMITED StartTime=2026-12-01T18:06:05 EndTime=2026-12-01T18:06:15 NodeList=vm NodeCnt=1 ProcCnt=1 WorkDir=/work/main ReservationName= Tres=cpu=1,mem=2000M,node=1,billing=1 Account= QOS= WcKey= Cluster=unknown SubmitTime=2026-12-01T18:06:02 EligibleTime=2026-12-01T18:06:02 DerivedExitCode=0:0 ExitCode=3:0\n";
        var status = Assert.Single(SlurmParsers.KeyValueRecords(output, "jobcomp file"));
        Assert.Equal(new JobStatus("1", JobState.Crashed, "FAILED", 3, 0, TimeSpan.FromSeconds(10), 1, "j.sh", "jobcomp file", "/work/main"), status); // WorkDir: whose job it is
    }

    [Fact]
    public void Sacct_parsable_lines_are_read_with_their_state_words()
    {
        // sacct -P separates fields with '|' and has no trailing '|' (Slurm documentation); "CANCELLED by 0" as printed.
        const string output = "41|cmp.a.leg001|COMPLETED|0:0|3605|8\n42|cmp.a.leg002|CANCELLED by 0|0:15|12|8\n43|x|TIMEOUT|0:0|3660|8\n";
        var statuses = SlurmParsers.Sacct(output);
        Assert.Equal(new JobStatus("41", JobState.Succeeded, "COMPLETED", 0, 0, TimeSpan.FromSeconds(3605), 8, "cmp.a.leg001", "sacct"), statuses[0]);
        Assert.Equal(JobState.Stopped, statuses[1].State);
        Assert.Equal(JobState.OutOfTime, statuses[2].State);
    }

    // Source: Slurm documentation, "JOB STATE CODES" of squeue/sacct (base states and flags), as listed in the
    // project's reference sheet.
    [Theory]
    [InlineData("PENDING", JobState.Waiting)]
    [InlineData("RUNNING", JobState.Working)]
    [InlineData("SUSPENDED", JobState.Paused)]
    [InlineData("COMPLETED", JobState.Succeeded)]
    [InlineData("FAILED", JobState.Crashed)]
    [InlineData("TIMEOUT", JobState.OutOfTime)]
    [InlineData("CANCELLED", JobState.Stopped)]
    [InlineData("NODE_FAIL", JobState.Interrupted)]
    [InlineData("PREEMPTED", JobState.Interrupted)]
    [InlineData("OUT_OF_MEMORY", JobState.Crashed)]
    [InlineData("BOOT_FAIL", JobState.Crashed)]
    [InlineData("DEADLINE", JobState.Crashed)]
    [InlineData("COMPLETING", JobState.Working)]
    [InlineData("CONFIGURING", JobState.Waiting)]
    [InlineData("REQUEUED", JobState.Waiting)]
    [InlineData("REQUEUE_HOLD", JobState.Waiting)]
    [InlineData("SPECIAL_EXIT", JobState.Waiting)]
    [InlineData("RESIZING", JobState.Working)]
    [InlineData("SIGNALING", JobState.Working)]
    [InlineData("STAGE_OUT", JobState.Working)]
    [InlineData("STOPPED", JobState.Paused)]
    [InlineData("CANCELLED by 1000", JobState.Stopped)]
    [InlineData("COMPLETED+", JobState.Succeeded)]
    [InlineData("CD", JobState.Succeeded)]
    [InlineData("OOM", JobState.Crashed)]
    [InlineData("SOMETHING_NEW", JobState.Unrecognised)]
    [InlineData("", JobState.Unrecognised)]
    public void Every_documented_state_maps_and_unknown_ones_stay_unknown(string native, JobState state)
    {
        Assert.Equal(state, SlurmStates.Parse(native));
    }

    [Fact]
    public void Unknown_is_never_final()
    {
        Assert.False(JobState.Unrecognised.IsFinal());
        Assert.False(JobState.Vanished.IsFinal());
        Assert.True(JobState.OutOfTime.IsFinal());
    }

    [Theory]
    [InlineData("slurm_load_jobs error: Unable to contact slurm controller (connect failure)", BatchErrorKind.Transient)]
    [InlineData("sbatch: error: Batch job submission failed: Socket timed out on send/recv operation", BatchErrorKind.Transient)]
    [InlineData("sbatch: error: Batch job submission failed: Invalid account or account/partition combination specified", BatchErrorKind.Rejected)]
    [InlineData("sbatch: error: s_p_parse_file: unable to read \"/etc/slurm/slurm.conf\": No such file or directory", BatchErrorKind.Permanent)]
    public void Command_errors_are_classified(string stderr, BatchErrorKind kind)
    {
        Assert.Equal(kind, SlurmBatchSystem.Classify("sbatch", new CommandResult(1, "", stderr)).Kind);
    }

    [Fact]
    public void Submit_arguments_are_a_plain_list_with_the_warning_for_the_batch_shell()
    {
        var adapter = new SlurmBatchSystem(new SlurmOptions { Partition = "test" });
        var request = new JobRequest(JobName.For("t0", "q4 a/b", 2), "/w/run.sh", "/w", 48, TimeSpan.FromHours(23.99), "/w/o.txt", "/w/e.txt",
            new Dictionary<string, string> { ["CAMPAIGN_RESTART"] = "/w/ck 1" }, "77", new WarningSignal("USR1", 600));
        Assert.Equal(
            new[]
            {
                "--parsable", "--job-name=" + JobName.For("t0", "q4 a/b", 2), "--chdir=/w", "--output=/w/o.txt", "--error=/w/e.txt", "--ntasks=48", "--time=1440",
                "--export=ALL", "--partition=test", "--dependency=afterany:77", "--signal=B:USR1@600", "/w/run.sh",
            },
            adapter.SubmitArguments(request));
    }
}
