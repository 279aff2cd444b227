using Campaign.Core.Configuration;
using Campaign.Core.Domain;

namespace Campaign.Core.Tests.Configuration;

public class ClusterProfileReaderTests
{
    private const string Valid = """
        name = "testbox"
        description = "a test cluster"
        batch_system = "slurm"
        cores_per_node = 64
        memory_per_node_gb = 256
        wall_limit_hours = 24
        charge_whole_nodes = true
        charge_factor = 1.5
        relative_speed = 0.9
        max_jobs_queued = 30
        max_jobs_running = 10
        queue_wait_median_hours = 2
        queue_wait_p90_hours = 12
        """;

    private static string Replace(string field, string value) =>
        string.Join('\n', Valid.Split('\n').Select(l => l.StartsWith(field + " =", StringComparison.Ordinal) ? $"{field} = {value}" : l));

    private static IReadOnlyList<string> Problems(string text) =>
        Assert.Throws<InvalidInputException>(() => ClusterProfileReader.Read(text, "p.toml")).Problems;

    [Fact]
    public void A_valid_profile_is_read_with_every_field()
    {
        var p = ClusterProfileReader.Read(Valid, "p.toml");
        Assert.Equal(new ClusterProfile("testbox", "a test cluster", BatchSystemKind.Slurm, 64, 256, 24, true, 1.5, 0.9, 30, 10, 2, 12), p);
    }

    [Fact]
    public void Partition_and_account_are_read_and_cannot_smuggle_options_or_shell_text()
    {
        var p = ClusterProfileReader.Read(Valid + "\npartition = \"cpu-long\"\naccount = \"saltmarsh.2027\"", "p.toml");
        Assert.Equal(("cpu-long", "saltmarsh.2027"), (p.Partition, p.Account));
        foreach (var hostile in new[] { "--wrap=id", "cpu; rm -rf ~", "$(id)", "a b", "", "-q" })
        {
            var problems = Problems(Valid + "\npartition = \"" + hostile + "\"");
            Assert.Equal($"p.toml:14:13: partition = \"{hostile}\": expected {ClusterProfileReader.SiteNameRule}", Assert.Single(problems));
        }
    }

    [Fact]
    public void Whole_node_charging_rounds_cores_up_to_nodes()
    {
        var p = ClusterProfileReader.Read(Valid, "p.toml");
        // 100 cores on 64-core nodes occupy 2 nodes = 128 cores; 10 h x 128 x 1.5 = 1920 core-hours.
        Assert.Equal(1920, p.ChargedCoreHours(100, 10), 9);
        var shared = ClusterProfileReader.Read(Replace("charge_whole_nodes", "false"), "p.toml");
        Assert.Equal(1500, shared.ChargedCoreHours(100, 10), 9);
    }

    [Theory]
    [InlineData("name", "\"Big Box\"", "p.toml:1:8: name = \"Big Box\": expected a name of 1 to 32 characters: lower-case letters, digits, '-' or '_', starting with a letter")]
    [InlineData("name", "7", "p.toml:1:8: name = 7: expected a name of 1 to 32 characters: lower-case letters, digits, '-' or '_', starting with a letter")]
    [InlineData("description", "3", "p.toml:2:15: description = 3: expected a string")]
    [InlineData("batch_system", "\"lsf\"", "p.toml:3:16: batch_system = \"lsf\": expected one of \"local\", \"slurm\", \"pbs\"")]
    [InlineData("cores_per_node", "0", "p.toml:4:18: cores_per_node = 0: expected an integer from 1 to 100000")]
    [InlineData("cores_per_node", "12.5", "p.toml:4:18: cores_per_node = 12.5: expected an integer from 1 to 100000")]
    [InlineData("memory_per_node_gb", "-1", "p.toml:5:22: memory_per_node_gb = -1: expected a number greater than 0 and at most 1000000 GB")]
    [InlineData("wall_limit_hours", "nan", "p.toml:6:20: wall_limit_hours = nan: expected a number greater than 0 and at most 8760 hours")]
    [InlineData("charge_whole_nodes", "\"yes\"", "p.toml:7:22: charge_whole_nodes = \"yes\": expected true or false")]
    [InlineData("charge_factor", "0", "p.toml:8:17: charge_factor = 0: expected a number greater than 0 and at most 1000")]
    [InlineData("relative_speed", "inf", "p.toml:9:18: relative_speed = inf: expected a number greater than 0 and at most 1000")]
    [InlineData("max_jobs_queued", "0", "p.toml:10:19: max_jobs_queued = 0: expected an integer from 1 to 1000000")]
    [InlineData("max_jobs_running", "31", "p.toml:11:20: max_jobs_running = 31: expected at most max_jobs_queued = 30")]
    [InlineData("queue_wait_median_hours", "-2", "p.toml:12:27: queue_wait_median_hours = -2: expected a number from 0 to 8760 hours")]
    [InlineData("queue_wait_p90_hours", "1", "p.toml:13:24: queue_wait_p90_hours = 1: expected at least queue_wait_median_hours = 2")]
    public void Every_bad_field_is_named_with_its_location_value_and_range(string field, string value, string message)
    {
        Assert.Equal(new[] { message }, Problems(Replace(field, value)));
    }

    [Fact]
    public void Missing_required_fields_and_unknown_fields_are_all_reported()
    {
        var problems = Problems("name = \"x\"\nwall_limit_hour = 4\n");
        Assert.Equal(
            new[]
            {
                "p.toml:2:19: unknown field 'wall_limit_hour': expected one of name, description, batch_system, cores_per_node, memory_per_node_gb, wall_limit_hours, charge_whole_nodes, charge_factor, relative_speed, max_jobs_queued, max_jobs_running, queue_wait_median_hours, queue_wait_p90_hours, partition, account, site, login_host, run_root, ssh_config, requires_master",
                "p.toml:1:1: batch_system is missing: expected one of \"local\", \"slurm\", \"pbs\"",
                "p.toml:1:1: cores_per_node is missing: expected an integer from 1 to 100000",
                "p.toml:1:1: memory_per_node_gb is missing: expected a number greater than 0 and at most 1000000 GB",
                "p.toml:1:1: wall_limit_hours is missing: expected a number greater than 0 and at most 8760 hours",
                "p.toml:1:1: charge_whole_nodes is missing: expected true or false",
            },
            problems);
    }

    [Fact]
    public void Malformed_toml_is_reported_with_its_location()
    {
        Assert.Equal(new[] { "p.toml:1:8: the string is not closed on its line: expected '\"'" }, Problems("name = \"x\n"));
    }

    [Fact]
    public void A_remote_profile_has_its_login_host_run_root_and_site_and_a_local_one_has_none()
    {
        var remote = ClusterProfileReader.Read(Valid + "\nsite = \"Northfell Centre\"\nlogin_host = \"nf-login\"\nrun_root = \"/scratch/grp/runs-root/\"\nrequires_master = true\n", "p.toml");
        Assert.Equal(new RemoteAccess("nf-login", "/scratch/grp/runs-root", null, true, "Northfell Centre"), remote.Remote);
        Assert.Equal("Northfell Centre", remote.Site);
        Assert.Null(ClusterProfileReader.Read(Valid, "p.toml").Remote);
        Assert.Equal("this host", ClusterProfileReader.Read(Valid, "p.toml").Site);
    }

    [Theory]
    [InlineData("login_host = \"-oProxyCommand=x\"\nrun_root = \"/r\"\n", "login_host = \"-oProxyCommand=x\": expected a Host name")]
    [InlineData("login_host = \"h\"\nrun_root = \"relative/runs\"\n", "run_root = \"relative/runs\": expected an absolute folder")]
    [InlineData("login_host = \"h\"\n", "run_root is missing: expected an absolute folder")]
    [InlineData("run_root = \"/r\"\n", "run_root = \"/r\": expected only with login_host")]
    public void A_bad_remote_field_is_named_with_what_was_expected(string lines, string message)
    {
        Assert.Contains(Problems(Valid + "\n" + lines), p => p.Contains(message, StringComparison.Ordinal));
    }
}
