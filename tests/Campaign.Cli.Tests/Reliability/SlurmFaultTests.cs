using System.Diagnostics;
using Campaign.Cli.Tests.Support;
using Xunit.Abstractions;

namespace Campaign.Cli.Tests.Reliability;

/// <summary>
/// The tracking cycle against the real one-node Slurm while the cluster misbehaves: the controller is stopped
/// and started again in the middle of a leg, and the node goes down under a running leg. Holds the
/// cluster exclusively (other Slurm tests wait).
/// </summary>
[Collection("slurm-tracking")]
public sealed class SlurmFaultTests(ITestOutputHelper output) : IDisposable
{
    private readonly TempFolder _folder = new();

    public void Dispose()
    {
        // Leave the shared cluster as other tests expect it: the node up, none of our jobs left.
        if (SlurmCluster.SkipReason is null && _node is not null)
        {
            Run("scontrol", "update", $"NodeName={_node}", "State=RESUME");
            Run("scancel", "--name", WorkspaceId.JobName(Path.Combine(_folder.Path, "ws"), "sm-q1-a00.res1.r1", 1));
        }

        _folder.Dispose();
    }

    private string? _node;

    private static (int Code, string Text) Run(string file, params string[] args)
    {
        var start = new ProcessStartInfo(file) { RedirectStandardError = true, RedirectStandardOutput = true, UseShellExecute = false };
        start.Environment["SLURM_CONF"] = SlurmCluster.ConfigFile;
        foreach (var a in args)
        {
            start.ArgumentList.Add(a);
        }

        using var process = Process.Start(start)!;
        var text = process.StandardOutput.ReadToEnd() + process.StandardError.ReadToEnd();
        process.WaitForExit();
        return (process.ExitCode, text.Trim());
    }

    private System.Text.Json.JsonElement Tick()
    {
        var tick = CliRun.Live(_folder.Path, "--dir", "ws", "tick", "--json");
        Assert.True(tick.ExitCode == 0, "a cycle failed: " + tick.Err + tick.Out);
        var json = tick.Json();
        foreach (var message in json.GetProperty("messages").EnumerateArray())
        {
            output.WriteLine($"{DateTime.UtcNow:HH:mm:ss} {message.GetString()}");
        }

        return json;
    }

    private System.Text.Json.JsonElement Run1() =>
        CliRun.Live(_folder.Path, "--dir", "ws", "status", "--json").Json().GetProperty("runs").EnumerateArray().Single(r => r.GetProperty("id").GetString() == "sm-q1-a00.res1.r1");

    private void TickUntil(Func<System.Text.Json.JsonElement, bool> done, TimeSpan limit, string what)
    {
        var deadline = DateTime.UtcNow + limit;
        while (DateTime.UtcNow < deadline)
        {
            Tick();
            if (done(Run1()))
            {
                return;
            }

            Thread.Sleep(1500);
        }

        Assert.Fail($"timed out waiting for {what}: {Run1()}");
    }

    [SlurmFact]
    public async Task The_cycle_rides_out_a_controller_restart_and_a_drained_node_and_the_run_finishes()
    {
        using var cluster = SlurmCluster.Use(exclusive: true);
        var state = Path.GetDirectoryName(SlurmCluster.ConfigFile)!;
        var ws = SlurmWorkspace.Create(_folder.Path, warningSeconds: 30, rehearsal: true);
        File.WriteAllText(Path.Combine(ws, "runs", "sm-q1-a00.res1.r1", "payload.json"), "{\"steps_per_second\": 60, \"checkpoint_every\": 100}");
        TickUntil(r => r.GetProperty("state").GetString() == "running", TimeSpan.FromSeconds(60), "the first leg to run");

        // 1. The controller stops (as for an upgrade or a crash) and comes back a few seconds later with its saved
        // state, while a cycle is querying it: the cycle's retries ride it out.
        var pid = int.Parse(File.ReadAllText(Path.Combine(state, "run", "slurmctld.pid")).Trim(), System.Globalization.CultureInfo.InvariantCulture);
        Process.GetProcessById(pid).Kill();
        Thread.Sleep(500);
        var during = Task.Run(() => CliRun.Live(_folder.Path, "--dir", "ws", "tick", "--json"));
        Thread.Sleep(4000);
        // The controller daemonizes: it must not inherit our pipes (reading them would wait for it to exit).
        var controller = new ProcessStartInfo("slurmctld") { UseShellExecute = false, RedirectStandardOutput = false, RedirectStandardError = false };
        foreach (var a in new[] { "-f", SlurmCluster.ConfigFile, "-i" })
        {
            controller.ArgumentList.Add(a);
        }

        using (var started = Process.Start(controller)!)
        {
            started.WaitForExit();
            Assert.Equal(0, started.ExitCode);
        }

        var outage = await during;
        output.WriteLine($"cycle during the outage: exit {outage.ExitCode} {outage.Err} {outage.Out}");
        Assert.Equal(0, outage.ExitCode);
        // Still the same leg, still active (running, or back in the queue if the controller requeued it).
        Assert.Contains(Run1().GetProperty("state").GetString(), new[] { "running", "queued" });
        Assert.Equal(1, Run1().GetProperty("legs").GetArrayLength());

        // 2. The node is drained (reported failing) under a running leg: the leg ends, the next one waits
        // for a node; the node comes back and the campaign carries on.
        TickUntil(r => r.GetProperty("state").GetString() == "running", TimeSpan.FromSeconds(120), "a running leg");
        var node = _node = Run("sinfo", "-h", "-N", "-o", "%N").Text.Split('\n')[0].Trim();
        Assert.Equal(0, Run("scontrol", "update", $"NodeName={node}", "State=DRAIN", "Reason=campaign-test").Code);
        var legsBefore = Run1().GetProperty("legs").GetArrayLength();
        TickUntil(r => r.GetProperty("legs").GetArrayLength() > legsBefore, TimeSpan.FromSeconds(150), "the next leg, queued behind the drained node");
        Thread.Sleep(5000);
        Tick();
        Assert.NotEqual("running", Run1().GetProperty("state").GetString()); // queued: no node to run on
        Assert.Equal(0, Run("scontrol", "update", $"NodeName={node}", "State=RESUME").Code);

        TickUntil(r => r.GetProperty("state").GetString() is "finished" or "held" or "failed", TimeSpan.FromMinutes(6), "the run to end");
        var run = Run1();
        output.WriteLine(run.ToString());
        Assert.Equal("finished", run.GetProperty("state").GetString());
        var legs = run.GetProperty("legs").EnumerateArray().ToList();
        Assert.All(legs, s => Assert.False(string.IsNullOrEmpty(s.GetProperty("job_id").GetString())));
        Assert.Equal(legs.Count, legs.Select(s => s.GetProperty("job_id").GetString()).Distinct().Count());
    }
}
