using Campaign.Cli.Tests.Support;

namespace Campaign.Cli.Tests;

/// <summary>The tracking daemon against the real one-node Slurm cluster (invented demo data).</summary>
[Collection("slurm-tracking")]
public sealed class SlurmTrackingTests : IDisposable
{
    private readonly TempFolder _folder = new();

    public void Dispose() => _folder.Dispose();

    [SlurmFact]
    public void A_short_campaign_runs_through_two_legs_joined_by_an_afterany_dependency()
    {
        using var cluster = SlurmCluster.Use();
        // One run only (level 1), paced so that the first leg is cut by the warning (Slurm time limits are minutes).
        var ws = SlurmWorkspace.Create(_folder.Path, warningSeconds: 40, prequeue: true);
        File.WriteAllText(Path.Combine(ws, "runs", "sm-q1-a00.res1", "payload.json"), "{\"steps_per_second\": 90, \"checkpoint_every\": 100}");
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

        var run = CliRun.Live(_folder.Path, "--dir", "ws", "status", "--json").Json().GetProperty("runs").EnumerateArray().Single(r => r.GetProperty("id").GetString() == "sm-q1-a00.res1");
        Assert.True(run.GetProperty("state").GetString() == "finished", run.ToString());
        var legs = run.GetProperty("legs").EnumerateArray().ToList();
        Assert.True(legs.Count >= 2, run.ToString());
        Assert.Contains(legs, s => s.TryGetProperty("restart_from", out var r) && r.GetString() == "newest at start"); // pre-queued with afterany
        Assert.All(legs, s => Assert.False(string.IsNullOrEmpty(s.GetProperty("job_id").GetString())));
    }
}
