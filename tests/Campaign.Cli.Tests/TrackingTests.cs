using System.Diagnostics;
using System.Globalization;
using System.Text.Json;
using Campaign.Cli.Tests.Support;
using Microsoft.Data.Sqlite;

namespace Campaign.Cli.Tests;

/// <summary>
/// The tracking daemon on the local runner with real detached processes and the demo payload (invented demo data),
/// with short legs (3 s) so runs need several. These tests take tens of seconds each: they wait for real jobs.
/// </summary>
[Collection("tracking")]
public sealed class TrackingTests : IDisposable
{
    private readonly TempFolder _folder = new();

    public void Dispose()
    {
        LocalJobs.KillAll(Ws());
        _folder.Dispose();
    }

    private string Ws(string relative = "") => Path.Combine(_folder.Path, "ws", relative);

    /// <summary>The demo workspace with its plan saved, tracking the given configurations on the workstation.</summary>
    private void Prepare(string only, string extraConfig = "", bool rehearsal = false)
    {
        Assert.Equal(0, CliRun.Demo(_folder.Path, "ws").ExitCode);
        if (extraConfig.Length > 0)
        {
            File.AppendAllText(Ws("campaign.toml"), extraConfig);
        }

        var arguments = new[] { "--dir", "ws", "track", "--on", "workbench", "--cores", "1", "--only", only };
        var track = CliRun.Live(_folder.Path, rehearsal ? arguments.Append("--rehearsal").ToArray() : arguments);
        Assert.True(track.ExitCode == 0, track.Err);
    }

    private JsonElement Status() => CliRun.Live(_folder.Path, "--dir", "ws", "status", "--json").Json().GetProperty("runs");

    private void TickUntilIdle(TimeSpan limit)
    {
        var deadline = DateTime.UtcNow + limit;
        while (DateTime.UtcNow < deadline)
        {
            var tick = CliRun.Live(_folder.Path, "--dir", "ws", "tick", "--json");
            Assert.True(tick.ExitCode == 0, tick.Err + tick.Out);
            if (tick.Json().GetProperty("active").GetInt32() == 0)
            {
                return;
            }

            Thread.Sleep(700);
        }

        Assert.Fail("the campaign did not finish in time: " + Status());
    }

    private List<string> SubmittedJobNames() => LocalJobs.SubmittedNames(Ws());

    [Fact]
    public void A_small_campaign_needing_several_legs_per_run_finishes_and_feeds_the_run_logs()
    {
        Prepare("sm-q1-a00,sm-q2-a04");
        // Every state change is also sent to a notification command as JSON on its standard input.
        var config = File.ReadAllText(Ws("campaign.toml")).Replace("[tracking]\n", "[tracking]\nnotify_command = [\"/bin/sh\", \"-c\", \"cat >> notices.jsonl; echo >> notices.jsonl\"]\n", StringComparison.Ordinal);
        File.WriteAllText(Ws("campaign.toml"), config);
        TickUntilIdle(TimeSpan.FromSeconds(120));
        var runs = Status().EnumerateArray().ToList();
        Assert.Equal(6, runs.Count);
        foreach (var run in runs)
        {
            Assert.Equal("finished", run.GetProperty("state").GetString());
            Assert.True(run.GetProperty("legs").GetArrayLength() >= 2, run.ToString());
            Assert.All(run.GetProperty("legs").EnumerateArray(), s => Assert.False(string.IsNullOrEmpty(s.GetProperty("job_id").GetString())));
        }

        var names = SubmittedJobNames();
        Assert.Equal(names.Count, names.Distinct().Count());
        var logs = CliRun.Of(_folder.Path, "--dir", "ws", "logs", "list", "--json").Json().GetProperty("runs").EnumerateArray().Select(r => r.GetProperty("run_id").GetString()).ToList();
        Assert.Contains("sm-q1-a00.res1", logs);
        Assert.Contains("sm-q2-a04.res3", logs);
        var notices = File.ReadAllLines(Ws("notices.jsonl")).Where(l => l.Length > 0).Select(l => JsonDocument.Parse(l).RootElement).ToList();
        Assert.Equal(6, notices.Count(n => n.GetProperty("to").GetString() == "finished"));
    }

    [Fact]
    public void Killing_the_daemon_at_twenty_arbitrary_points_loses_nothing_and_submits_no_leg_twice()
    {
        Prepare("sm-q1-a06,sm-q2-m04");
        var file = Path.Combine(AppContext.BaseDirectory, "campaign");
        var random = new Random(20261201); // seeded kill points
        var kills = 0;
        var cycles = 0;
        var deadline = DateTime.UtcNow + TimeSpan.FromSeconds(240);
        while (DateTime.UtcNow < deadline)
        {
            var start = new ProcessStartInfo(file) { RedirectStandardOutput = true, RedirectStandardError = true, UseShellExecute = false };
            start.Environment["DEMO_STEPS_PER_SECOND"] = "600"; // slower runs: more cycles to kill
            foreach (var a in new[] { "--dir", Ws(), "tick", "--json" })
            {
                start.ArgumentList.Add(a);
            }

            using var process = Process.Start(start)!;
            cycles++;
            var output = new StringWriter();
            process.OutputDataReceived += (_, e) => output.WriteLine(e.Data);
            process.BeginOutputReadLine();
            if (kills < 20)
            {
                // Anywhere in the cycle: while it starts, opens the database, queries, records or submits.
                Thread.Sleep(random.Next(30, 600));
                try
                {
                    process.Kill(); // SIGKILL
                    kills++;
                }
                catch (InvalidOperationException)
                {
                    // it had finished already: no kill this time
                }
            }

            process.WaitForExit();
            if (kills >= 20 && process.ExitCode == 0 && JsonDocument.Parse(output.ToString()).RootElement.GetProperty("active").GetInt32() == 0)
            {
                break;
            }

            Thread.Sleep(200);
        }

        Assert.Equal(20, kills);
        Assert.All(Status().EnumerateArray(), r => Assert.Equal("finished", r.GetProperty("state").GetString()));
        var names = SubmittedJobNames();
        Assert.Equal(names.Count, names.Distinct().Count());
        using var connection = new SqliteConnection($"Data Source={Ws("campaign.db")};Pooling=False");
        connection.Open();
        Assert.Equal("ok", Scalar(connection, "PRAGMA integrity_check"));
        // Every leg submitted is recorded (none left as a bare intent), and the charges add up: each finished
        // run's logged charge is the sum of its recorded legs' charges, and so is the cluster's total.
        Assert.Equal(0L, Scalar(connection, "SELECT COUNT(*) FROM legs WHERE phase <> 'ended'"));
        Assert.Equal((long)names.Count, Scalar(connection, "SELECT COUNT(*) FROM legs WHERE job_id IS NOT NULL AND job_id <> ''"));
        using var sums = connection.CreateCommand();
        sums.CommandText = "SELECT t.run_id, l.core_hours, (SELECT SUM(charged_core_hours) FROM legs s WHERE s.run_id = t.run_id) FROM tracked_runs t JOIN run_logs l ON l.run_id = t.run_id";
        using var reader = sums.ExecuteReader();
        var checkedRuns = 0;
        while (reader.Read())
        {
            Assert.Equal(reader.GetDouble(2), reader.GetDouble(1), 12);
            checkedRuns++;
        }

        Assert.Equal(6, checkedRuns);
        var total = Status().EnumerateArray().Sum(r => r.GetProperty("charged_core_hours").GetDouble());
        Assert.Equal((double)Scalar(connection, "SELECT SUM(charged_core_hours) FROM legs")!, total, 9);
    }

    private static object? Scalar(SqliteConnection connection, string sql)
    {
        using var command = connection.CreateCommand();
        command.CommandText = sql;
        return command.ExecuteScalar();
    }

    [Fact]
    public void A_stalled_run_and_a_run_with_a_growing_constraint_norm_are_held_with_reasons()
    {
        Prepare("sm-q1-a00", "\n# (test)\n", rehearsal: true);
        // Runs .res1 stalls at t = 800 M; .res2's constraint norm grows as exp(0.02 t); .res3 is healthy.
        File.WriteAllText(Ws("runs/sm-q1-a00.res1.r1/payload.json"), "{\"stall_at\": 800}");
        File.WriteAllText(Ws("runs/sm-q1-a00.res2.r1/payload.json"), "{\"instability_rate\": 0.02}");
        // Long legs (12 s) and a short stall time (0.6 s without new progress), so the stall is seen before a limit.
        var config = File.ReadAllText(Ws("campaign.toml"))
            .Replace("stall_minutes = 0.045", "stall_minutes = 0.01", StringComparison.Ordinal)
            .Replace("leg_minutes = 0.05", "leg_minutes = 0.2", StringComparison.Ordinal);
        File.WriteAllText(Ws("campaign.toml"), config);
        TickUntilIdle(TimeSpan.FromSeconds(120));
        var runs = Status().EnumerateArray().ToDictionary(r => r.GetProperty("id").GetString()!);
        Assert.True(runs["sm-q1-a00.res1.r1"].GetProperty("state").GetString() == "held", runs["sm-q1-a00.res1.r1"].ToString());
        Assert.True(runs["sm-q1-a00.res2.r1"].GetProperty("state").GetString() == "held", runs["sm-q1-a00.res2.r1"].ToString());
        Assert.Contains("no progress for", runs["sm-q1-a00.res1.r1"].GetProperty("reason").GetString());
        Assert.Contains("again after a restart", runs["sm-q1-a00.res1.r1"].GetProperty("reason").GetString());
        Assert.Equal("held", runs["sm-q1-a00.res2.r1"].GetProperty("state").GetString());
        Assert.StartsWith("constraint norm growing steadily: rate 0.02 per M", runs["sm-q1-a00.res2.r1"].GetProperty("reason").GetString());
        Assert.Equal("finished", runs["sm-q1-a00.res3.r1"].GetProperty("state").GetString());
        var logged = CliRun.Of(_folder.Path, "--dir", "ws", "logs", "list", "--json").Json().GetProperty("runs").EnumerateArray().Select(r => r.GetProperty("run_id").GetString());
        Assert.DoesNotContain("sm-q1-a00.res3.r1", logged); // a rehearsal does not teach the cost model

        // A human releases the stalled run after fixing it.
        File.Delete(Ws("runs/sm-q1-a00.res1.r1/payload.json"));
        Assert.Equal(0, CliRun.Live(_folder.Path, "--dir", "ws", "release", "sm-q1-a00.res1.r1").ExitCode);
        TickUntilIdle(TimeSpan.FromSeconds(60));
        Assert.Equal("finished", Status().EnumerateArray().Single(r => r.GetProperty("id").GetString() == "sm-q1-a00.res1.r1").GetProperty("state").GetString());
    }

    [Fact]
    public void A_leg_the_warning_ends_before_the_code_starts_is_too_short_not_a_failure_and_five_in_a_row_hold_the_run()
    {
        // Regression (lifecycle issue): on a loaded cluster the warning signal reached the demo payload before it had
        // installed its handler, and the run was held as failed. Here the code takes 5 s to start and the warning
        // comes after 2 s, every time.
        Prepare("sm-q1-a00", rehearsal: true);
        File.WriteAllText(Ws("slow-start.sh"), "#!/bin/sh\nsleep 5\n");
        File.SetUnixFileMode(Ws("slow-start.sh"), (UnixFileMode)Convert.ToInt32("755", 8));
        var config = File.ReadAllText(Ws("campaign.toml")).Replace("script = \"run-leg.sh\"", "script = \"slow-start.sh\"", StringComparison.Ordinal);
        File.WriteAllText(Ws("campaign.toml"), config);
        TickUntilIdle(TimeSpan.FromSeconds(150));

        var runs = Status().EnumerateArray().ToList();
        Assert.Equal(3, runs.Count);
        foreach (var run in runs)
        {
            Assert.Equal("held", run.GetProperty("state").GetString());
            Assert.StartsWith($"{Campaign.Core.Tracking.LegDecision.ShortLegLimit} legs in a row ended by the warning signal before the code made progress", run.GetProperty("reason").GetString(), StringComparison.Ordinal);
            Assert.Equal(Campaign.Core.Tracking.LegDecision.ShortLegLimit, run.GetProperty("legs").GetArrayLength());
        }

        var events = CliRun.Live(_folder.Path, "--dir", "ws", "status", "--events", "200", "--json").Json().GetProperty("events").EnumerateArray().Select(e => e.GetProperty("why").GetString()!).ToList();
        Assert.Equal(3 * (Campaign.Core.Tracking.LegDecision.ShortLegLimit - 1), events.Count(e => e.Contains("leg too short", StringComparison.Ordinal)));
        Assert.DoesNotContain(events, e => e.Contains("without progress", StringComparison.Ordinal));
    }

    [Fact]
    public void A_run_whose_constraint_norm_is_not_finite_is_held_and_never_logged_as_completed()
    {
        // Regression (faults issue, item 11): progress lines "t nan", then the done marker: the run was finished and
        // written into the run logs as completed.
        Prepare("sm-q1-a00");
        File.WriteAllText(Ws("nan-code.sh"), "#!/bin/sh\ncd \"$CAMPAIGN_RUN_DIR\" || exit 2\nfor t in 50 100 150 200 250 300 350 400; do echo \"$t nan\" >> progress.dat; done\ntouch DONE\n");
        File.SetUnixFileMode(Ws("nan-code.sh"), (UnixFileMode)Convert.ToInt32("755", 8));
        var config = File.ReadAllText(Ws("campaign.toml")).Replace("script = \"run-leg.sh\"", "script = \"nan-code.sh\"", StringComparison.Ordinal);
        File.WriteAllText(Ws("campaign.toml"), config);
        var logsBefore = CliRun.Of(_folder.Path, "--dir", "ws", "logs", "list", "--json").Json().GetProperty("runs").GetArrayLength();
        TickUntilIdle(TimeSpan.FromSeconds(90));

        foreach (var run in Status().EnumerateArray())
        {
            Assert.Equal("held", run.GetProperty("state").GetString());
            Assert.Equal("constraint norm not finite (nan at t = 50 M): the run has gone bad", run.GetProperty("reason").GetString());
        }

        Assert.Equal(logsBefore, CliRun.Of(_folder.Path, "--dir", "ws", "logs", "list", "--json").Json().GetProperty("runs").GetArrayLength());
    }

    [Fact]
    public void A_code_that_ignores_the_warning_and_never_advances_is_held_after_two_timed_out_legs()
    {
        // Regression (faults issue, item 10): such a code gave 15 legs in 60 s with no progress and was never held.
        Prepare("sm-q1-a00", rehearsal: true);
        File.WriteAllText(Ws("stuck.sh"), "#!/bin/sh\ntrap '' USR1\nsleep 60\n");
        File.SetUnixFileMode(Ws("stuck.sh"), (UnixFileMode)Convert.ToInt32("755", 8));
        // (The stall rule is set aside here, at 10 min, so that only the counting of timeouts can end it.)
        var config = File.ReadAllText(Ws("campaign.toml")).Replace("script = \"run-leg.sh\"", "script = \"stuck.sh\"", StringComparison.Ordinal)
            .Replace("stall_minutes = 0.045", "stall_minutes = 10", StringComparison.Ordinal);
        File.WriteAllText(Ws("campaign.toml"), config);
        TickUntilIdle(TimeSpan.FromSeconds(120));

        foreach (var run in Status().EnumerateArray())
        {
            Assert.Equal("held", run.GetProperty("state").GetString());
            Assert.StartsWith("leg ran out of time without progress 2 times in a row", run.GetProperty("reason").GetString(), StringComparison.Ordinal);
            Assert.Equal(2, run.GetProperty("legs").GetArrayLength());
        }
    }

    [Fact]
    public void The_budget_guard_stops_submission_at_the_line_and_says_which_runs_wait()
    {
        // One leg on the workstation may charge 1 core x 3 s = 1/1200 core-hour; the allocation has room for two.
        Prepare("sm-q1-a00", "\n[[allocation]]\ncluster = \"workbench\"\namount = 0.0018\nunit = \"core-hours\"\nstart = 2025-01-01\nend = 2030-12-31\n");
        var tick = CliRun.Live(_folder.Path, "--dir", "ws", "tick", "--json").Json();
        Assert.Equal(2, tick.GetProperty("submitted").GetInt32());
        var runs = Status().EnumerateArray().ToList();
        var waiting = runs.Where(r => r.GetProperty("state").GetString() == "waiting_budget").ToList();
        Assert.Single(waiting);
        Assert.StartsWith("waiting for budget: the next leg may charge 0 core-hours; 0 left on workbench", waiting[0].GetProperty("reason").GetString());
    }

    [Fact]
    public void The_payload_resumed_from_a_checkpoint_ends_in_exactly_the_state_of_an_uninterrupted_run()
    {
        Assert.Equal(0, CliRun.Demo(_folder.Path, "ws").ExitCode);
        string RunFolder(string name)
        {
            var folder = Path.Combine(_folder.Path, name);
            Directory.CreateDirectory(folder);
            File.WriteAllText(Path.Combine(folder, "run.json"), "{\"q\": 3, \"chi1\": [0, 0, 0.6], \"chi2\": [0, 0, -0.2], \"omega0\": 0.02, \"target_length\": 3000, \"end_of_inspiral_x\": 0.16666666666666666}");
            return folder;
        }

        Process Payload(string folder, string? restart, double pace)
        {
            var start = new ProcessStartInfo(Path.Combine(AppContext.BaseDirectory, "campaign")) { UseShellExecute = false, WorkingDirectory = folder };
            start.ArgumentList.Add("__demo-payload");
            start.ArgumentList.Add(folder);
            start.Environment["DEMO_STEPS_PER_SECOND"] = pace.ToString(CultureInfo.InvariantCulture);
            start.Environment["DEMO_CHECKPOINT_EVERY"] = "100";
            if (restart is not null)
            {
                start.Environment["CAMPAIGN_RESTART"] = restart;
            }

            return Process.Start(start)!;
        }

        var whole = RunFolder("whole");
        using (var p = Payload(whole, null, 0))
        {
            p.WaitForExit();
            Assert.Equal(0, p.ExitCode);
        }

        var pieces = RunFolder("pieces");
        for (var i = 0; i < 3; i++)
        {
            // Signal it once it has made progress (its handler is installed before its first step), however loaded the cluster.
            var progress = Path.Combine(pieces, "progress.dat");
            var before = File.Exists(progress) ? new FileInfo(progress).Length : 0;
            using var p = Payload(pieces, i == 0 ? null : "newest", 3000);
            var deadline = DateTime.UtcNow.AddSeconds(60);
            while ((!File.Exists(progress) || new FileInfo(progress).Length <= before) && DateTime.UtcNow < deadline)
            {
                Thread.Sleep(20);
            }

            Thread.Sleep(100);
            Assert.True(Campaign.Batch.Tests.Support.Signals.Send(p.Id, 10)); // SIGUSR1: checkpoint and stop
            p.WaitForExit();
            Assert.Equal(0, p.ExitCode);
        }

        using (var p = Payload(pieces, "newest", 0))
        {
            p.WaitForExit();
        }

        Assert.True(File.Exists(Path.Combine(pieces, "DONE")));
        Assert.Equal(File.ReadAllText(Path.Combine(whole, "final.json")), File.ReadAllText(Path.Combine(pieces, "final.json")));
        Assert.True(Directory.EnumerateFiles(Path.Combine(pieces, "checkpoints"), "*.ok").Count() >= 3);
    }
}
