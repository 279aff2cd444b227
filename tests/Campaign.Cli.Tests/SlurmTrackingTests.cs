using Campaign.Cli.Tests.Support;

namespace Campaign.Cli.Tests;

/// <summary>The tracking daemon against the real one-node Slurm cluster (invented demo data).</summary>
[Collection("slurm-tracking")]
public sealed class SlurmTrackingTests : IDisposable
{
    private readonly TempFolder _folder = new();

    public void Dispose() => _folder.Dispose();

    [SlurmFact]
    public void A_short_campaign_runs_through_two_segments_joined_by_an_afterany_dependency()
    {
        using var cluster = SlurmCluster.Use();
        Environment.SetEnvironmentVariable("SLURM_CONF", SlurmCluster.ConfigFile);
        File.SetUnixFileMode(_folder.Path, (UnixFileMode)Convert.ToInt32("755", 8));
        Assert.Equal(0, CliRun.Demo(_folder.Path, "ws").ExitCode);
        var ws = Path.Combine(_folder.Path, "ws");
        File.WriteAllText(Path.Combine(ws, "machines", "minislurm.toml"),
            "name = \"minislurm\"\nbatch_system = \"slurm\"\ncores_per_node = 8\nmemory_per_node_gb = 2\nwall_limit_hours = 1\ncharge_whole_nodes = false\n");
        var config = File.ReadAllText(Path.Combine(ws, "campaign.toml"))
            .Replace("machines = [\"halyard\", \"gunwale\", \"workbench\"]", "machines = [\"halyard\", \"gunwale\", \"workbench\", \"minislurm\"]", StringComparison.Ordinal)
            .Replace("segment_minutes = 0.05", "segment_minutes = 1\nprequeue = true", StringComparison.Ordinal)
            .Replace("warning_seconds = 1", "warning_seconds = 40", StringComparison.Ordinal)
            .Replace("stall_minutes = 0.5", "stall_minutes = 5", StringComparison.Ordinal);
        File.WriteAllText(Path.Combine(ws, "campaign.toml"), config);
        Assert.Equal(0, CliRun.Live(_folder.Path, "--dir", "ws", "track", "--on", "minislurm", "--cores", "1", "--only", "sm-q1-a00").ExitCode);
        // One run only (level 1), paced so that the first segment is cut by the warning (Slurm time limits are minutes).
        foreach (var level in new[] { 2, 3 })
        {
            Assert.Equal(0, CliRun.Live(_folder.Path, "--dir", "ws", "abandon", $"sm-q1-a00.L{level}").ExitCode);
        }

        File.WriteAllText(Path.Combine(ws, "runs", "sm-q1-a00.L1", "payload.json"), "{\"steps_per_second\": 90, \"checkpoint_every\": 100}");
        var deadline = DateTime.UtcNow + TimeSpan.FromMinutes(5);
        while (DateTime.UtcNow < deadline)
        {
            var tick = CliRun.Live(_folder.Path, "--dir", "ws", "tick", "--json");
            Assert.True(tick.ExitCode == 0, tick.Err + tick.Out);
            if (tick.Json().GetProperty("active").GetInt32() == 0)
            {
                break;
            }

            Thread.Sleep(2000);
        }

        var run = CliRun.Live(_folder.Path, "--dir", "ws", "status", "--json").Json().GetProperty("runs").EnumerateArray().Single(r => r.GetProperty("id").GetString() == "sm-q1-a00.L1");
        Assert.True(run.GetProperty("state").GetString() == "finished", run.ToString());
        var segments = run.GetProperty("segments").EnumerateArray().ToList();
        Assert.True(segments.Count >= 2, run.ToString());
        Assert.Contains(segments, s => s.TryGetProperty("restart_from", out var r) && r.GetString() == "newest at start"); // pre-queued with afterany
        Assert.All(segments, s => Assert.False(string.IsNullOrEmpty(s.GetProperty("job_id").GetString())));
    }
}
