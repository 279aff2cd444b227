using Campaign.Core.Configuration;
using Campaign.Core.Domain;

namespace Campaign.Core.Tests.Configuration;

public class WorkspaceConfigReaderTests
{
    private static readonly string[] Known = { "alpha", "beta" };

    private const string Valid = """
        [campaign]
        name = "Test campaign"
        clusters = ["alpha", "beta"]
        default_cluster = "beta"

        [[allocation]]
        cluster = "alpha"
        amount = 1_000_000
        unit = "core-hours"
        start = 2027-01-01
        end = 2027-12-31

        [[allocation.window]]
        start = 2027-01-01
        end = 2027-06-30
        amount = 500_000

        [[allocation.window]]
        start = 2027-07-01
        end = 2027-12-31
        amount = 500_000

        [[allocation]]
        cluster = "beta"
        amount = 2000
        unit = "node-hours"
        start = "2027-01-01"
        end = 2027-06-30

        [defaults]
        levels = [2, 3]
        cores = 96

        [length]
        extraction_radius_m = 800
        """;

    private static IReadOnlyList<string> Problems(string text) =>
        Assert.Throws<InvalidInputException>(() => WorkspaceConfigReader.Read(text, "c.toml", Known)).Problems;

    [Fact]
    public void Tracking_paths_cannot_leave_the_run_folder()
    {
        var text = Valid + """

            [tracking]
            progress_file = "../../../home/someone/.ssh/id_rsa"
            checkpoint_pattern = "/etc/*"
            done_marker = "logs/../../DONE"
            checkpoint_marker = "/../x"
            """;
        var problems = Problems(text);
        Assert.Equal(new[]
        {
            "c.toml:38:22: tracking.checkpoint_pattern = \"/etc/*\": expected a relative path inside the run's folder (not absolute, no '..')",
            "c.toml:37:17: tracking.progress_file = \"../../../home/someone/.ssh/id_rsa\": expected a relative path inside the run's folder (not absolute, no '..')",
            "c.toml:39:15: tracking.done_marker = \"logs/../../DONE\": expected a relative path inside the run's folder (not absolute, no '..')",
            "c.toml:40:21: tracking.checkpoint_marker = \"/../x\": expected a file-name suffix (no '/' and no '..')",
        }, problems);
        var fine = WorkspaceConfigReader.Read(Valid + "\n[tracking]\nprogress_file = \"out/progress.dat\"\n", "c.toml", Known);
        Assert.Equal("out/progress.dat", fine.Tracking.ProgressFile);
    }

    [Fact]
    public void A_valid_config_is_read()
    {
        var config = WorkspaceConfigReader.Read(Valid, "c.toml", Known);
        Assert.Equal("Test campaign", config.Name);
        Assert.Equal(new[] { "alpha", "beta" }, config.Clusters);
        Assert.Equal("beta", config.DefaultCluster);
        Assert.Equal(2, config.Allocations.Count);
        Assert.Equal(2, config.Allocations[0].Windows.Count);
        Assert.Equal(AllocationUnit.NodeHours, config.Allocations[1].Unit);
        Assert.Equal(new DateOnly(2027, 6, 30), config.Allocations[1].End);
        Assert.Equal(new[] { 2, 3 }, config.Defaults.Levels);
        Assert.Equal(96, config.Defaults.Cores);
        Assert.Equal(800, config.Length.ExtractionRadius);
        Assert.Equal(150, config.Length.MinimumPostPeak);
    }

    [Theory]
    [InlineData("clusters = [\"alpha\", \"beta\"]", "clusters = [\"alpha\", \"beta\", \"gamma\"]", "c.toml:3:12: campaign.clusters = [\"alpha\", \"beta\", \"gamma\"]: expected cluster names with a profile; \"gamma\" has none (known: alpha, beta)")]
    [InlineData("default_cluster = \"beta\"", "default_cluster = \"zeta\"", "c.toml:4:19: campaign.default_cluster = \"zeta\": expected one of campaign.clusters: alpha, beta")]
    [InlineData("amount = 2000", "amount = -5", "c.toml:25:10: allocation.amount = -5: expected a number greater than 0 and at most 1000000000000, or a string with " + Campaign.Core.Text.Amount.Expected)]
    [InlineData("unit = \"node-hours\"", "unit = \"hours\"", "c.toml:26:8: allocation.unit = \"hours\": expected one of \"core-hours\", \"node-hours\"")]
    [InlineData("end = 2027-06-30\n\n[defaults]", "end = 2026-06-30\n\n[defaults]", "c.toml:28:7: allocation.end = 2026-06-30: expected a date after start = 2027-01-01")]
    [InlineData("start = \"2027-01-01\"", "start = \"January\"", "c.toml:27:9: allocation.start = \"January\": expected a date YYYY-MM-DD")]
    [InlineData("levels = [2, 3]", "levels = [2, 30]", "c.toml:31:10: defaults.levels = [2, 30]: expected an array of integers from 0 to 20")]
    [InlineData("cores = 96", "cores = 0", "c.toml:32:9: defaults.cores = 0: expected an integer from 1 to 10000000")]
    [InlineData("extraction_radius_m = 800", "extraction_radius_m = 5", "c.toml:35:23: length.extraction_radius_m = 5: expected a finite number from 10 to 100000")]
    [InlineData("amount = 500_000\n\n[[allocation.window]]\nstart = 2027-07-01", "amount = 500_000\n\n[[allocation.window]]\nstart = 2027-06-01", "c.toml:19:9: allocation.window.start = 2027-06-01: expected windows in date order that do not overlap; the previous window ends 2027-06-30")]
    public void Bad_fields_are_located_and_explained(string from, string to, string message)
    {
        Assert.Contains(from, Valid);
        Assert.Equal(new[] { message }, Problems(Valid.Replace(from, to, StringComparison.Ordinal)));
    }

    [Fact]
    public void Windows_may_not_add_up_to_more_than_the_allocation()
    {
        var text = Valid.Replace("amount = 1_000_000", "amount = 900_000", StringComparison.Ordinal);
        Assert.Equal(new[] { "c.toml:8:10: allocation.amount = 900_000: expected at least the sum of its windows, 1000000" }, Problems(text));
    }

    [Fact]
    public void A_missing_campaign_table_is_named()
    {
        Assert.Equal(new[] { "c.toml:1:1: campaign is missing: expected a table [campaign]" }, Problems("[defaults]\ncores = 4\n"));
    }
}
