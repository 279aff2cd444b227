namespace Campaign.Batch.Tests;

public class JobNameTests
{
    [Fact]
    public void Ids_that_differ_only_in_dots_and_underscores_get_different_names()
    {
        // Regression (faults issue, item 7): "a.b" and "a_b" both became cmp.a_b_L1.leg001.
        Assert.NotEqual(JobName.For("5e1f09ab", "a.b.res1", 1), JobName.For("5e1f09ab", "a_b.res1", 1));
        Assert.Equal("cmp.5e1f09ab.a.b.res1.leg001", JobName.For("5e1f09ab", "a.b.res1", 1));
    }

    [Fact]
    public void The_former_name_form_is_the_one_workspaces_before_schema_9_gave_their_jobs()
    {
        // A job submitted before the upgrade carries the run's former id and a ".sNNN" suffix; a look-up after the
        // upgrade must be able to build that name again, byte for byte.
        Assert.Equal("cmp.5e1f09ab.q4.L2.r1.s007", JobName.Former("5e1f09ab", "q4.L2.r1", 7));
        Assert.NotEqual(JobName.Former("5e1f09ab", "q4.L2", 7), JobName.For("5e1f09ab", "q4.res2", 7));
    }

    [Fact]
    public void Two_workspaces_never_share_a_job_name()
    {
        // Regression (faults issue, item 1): names carried nothing of the workspace, so a look-up by name in the
        // user's queue adopted another workspace's job.
        Assert.NotEqual(JobName.For("5e1f09ab", "c1.res1", 1), JobName.For("0badc0de", "c1.res1", 1));
    }

    [Fact]
    public void Long_ids_keep_a_readable_start_and_stay_distinct_and_valid()
    {
        var common = new string('x', 50);
        var one = JobName.For("5e1f09ab", common + "1.res1.r1", 12);
        var two = JobName.For("5e1f09ab", common + "2.res1.r1", 12);
        Assert.NotEqual(one, two);
        Assert.All(new[] { one, two }, n => Assert.True(JobName.IsValid(n), n));
        Assert.All(new[] { one, two }, n => Assert.StartsWith("cmp.5e1f09ab.xxxx", n, StringComparison.Ordinal));
        Assert.All(new[] { one, two }, n => Assert.EndsWith(".leg012", n, StringComparison.Ordinal));
        Assert.False(JobName.IsValid("cmp.a.leg001\n"));
        Assert.Equal("cmp.5e1f09ab.q4_a_b-", JobName.For("5e1f09ab", "q4 a/b", 2)[..20]); // a character a job name cannot carry: cleaned, and hashed apart
    }
}
