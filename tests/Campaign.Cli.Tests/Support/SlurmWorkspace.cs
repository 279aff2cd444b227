namespace Campaign.Cli.Tests.Support;

/// <summary>
/// The demo workspace with a cluster "minislurm" on the test cluster, tracking one run (sm-q1-a00.res1, or its rehearsal
/// sm-q1-a00.res1.r1; its other levels abandoned) with one-minute legs: what the Slurm tracking tests start from.
/// </summary>
public static class SlurmWorkspace
{
    public static string Create(string folder, int warningSeconds, bool prequeue = false, bool rehearsal = false)
    {
        Environment.SetEnvironmentVariable("SLURM_CONF", SlurmCluster.ConfigFile);
        File.SetUnixFileMode(folder, (UnixFileMode)Convert.ToInt32("755", 8)); // the job runs as root but reads through the path
        Assert.Equal(0, CliRun.Demo(folder, "ws").ExitCode);
        var ws = Path.Combine(folder, "ws");
        File.WriteAllText(Path.Combine(ws, "clusters", "minislurm.toml"),
            "name = \"minislurm\"\nbatch_system = \"slurm\"\ncores_per_node = 8\nmemory_per_node_gb = 2\nwall_limit_hours = 1\ncharge_whole_nodes = false\n");
        var config = File.ReadAllText(Path.Combine(ws, "campaign.toml"))
            .Replace("clusters = [\"halyard\", \"gunwale\", \"workbench\"]", "clusters = [\"halyard\", \"gunwale\", \"workbench\", \"minislurm\"]", StringComparison.Ordinal)
            .Replace("leg_minutes = 0.05", "leg_minutes = 1" + (prequeue ? "\nprequeue = true" : ""), StringComparison.Ordinal)
            .Replace("warning_seconds = 1", "warning_seconds = " + warningSeconds.ToString(System.Globalization.CultureInfo.InvariantCulture), StringComparison.Ordinal)
            .Replace("stall_minutes = 0.045", "stall_minutes = 5", StringComparison.Ordinal);
        File.WriteAllText(Path.Combine(ws, "campaign.toml"), config);
        var track = new[] { "--dir", "ws", "track", "--on", "minislurm", "--cores", "1", "--only", "sm-q1-a00" };
        Assert.Equal(0, CliRun.Live(folder, rehearsal ? track.Append("--rehearsal").ToArray() : track).ExitCode);
        foreach (var level in new[] { 2, 3 })
        {
            Assert.Equal(0, CliRun.Live(folder, "--dir", "ws", "abandon", $"sm-q1-a00.res{level}{(rehearsal ? ".r1" : "")}").ExitCode);
        }

        return ws;
    }
}
