using System.Diagnostics;
using System.Text.Json;
using Campaign.Cli.Tests.Support;
using Microsoft.Data.Sqlite;
using Xunit.Abstractions;

namespace Campaign.Cli.Tests.Reliability;

/// <summary>Runs as root with permission to mount: the disk-full and read-only tests need a small file system of their own.</summary>
public sealed class MountFactAttribute : FactAttribute
{
    private static readonly Lazy<string?> Reason = new(() =>
    {
        if (!OperatingSystem.IsLinux() || Environment.UserName != "root")
        {
            return "needs root on Linux to mount a small tmpfs (a full or read-only disk cannot be made otherwise)";
        }

        var probe = Directory.CreateTempSubdirectory("campaign-mount-probe-").FullName;
        try
        {
            return StorageFaultTests.Mount(probe, "1m") is { } error ? "cannot mount a tmpfs here: " + error : null;
        }
        finally
        {
            StorageFaultTests.Unmount(probe);
            Directory.Delete(probe);
        }
    });

    public MountFactAttribute()
    {
        if (Reason.Value is { } reason)
        {
            Skip = reason;
        }
    }
}

/// <summary>
/// Checkpoints that went bad, a disk that fills up or turns read-only, and commands racing the daemon: nothing is
/// corrupted, nothing is lost, and the campaign carries on when the fault goes.
/// </summary>
[Collection("tracking")]
public sealed class StorageFaultTests(ITestOutputHelper output) : IDisposable
{
    private readonly TempFolder _folder = new();
    private readonly List<Process> _daemons = new();
    private string? _mounted;

    public void Dispose()
    {
        foreach (var daemon in _daemons)
        {
            try
            {
                daemon.Kill(entireProcessTree: true); // still running after a failed test
            }
            catch (InvalidOperationException)
            {
                // it ended (and its handle was disposed) as it should
            }
        }

        LocalJobs.KillAll(Ws());
        if (_mounted is not null)
        {
            Unmount(_mounted);
        }

        _folder.Dispose();
    }

    private string Ws(string relative = "") => Path.Combine(_mounted ?? _folder.Path, "ws", relative);

    internal static string? Mount(string folder, string size)
    {
        var result = Run("mount", "-t", "tmpfs", "-o", $"size={size},mode=0700", "tmpfs", folder);
        return result.Code == 0 ? null : result.Text;
    }

    internal static void Unmount(string folder) => Run("umount", "-l", folder);

    private static (int Code, string Text) Run(string file, params string[] args)
    {
        var start = new ProcessStartInfo(file) { RedirectStandardError = true, RedirectStandardOutput = true, UseShellExecute = false };
        foreach (var a in args)
        {
            start.ArgumentList.Add(a);
        }

        try
        {
            using var process = Process.Start(start)!;
            var text = process.StandardError.ReadToEnd() + process.StandardOutput.ReadToEnd();
            process.WaitForExit();
            return (process.ExitCode, text.Trim());
        }
        catch (System.ComponentModel.Win32Exception e)
        {
            return (-1, e.Message);
        }
    }

    private CliRun Cli(params string[] args) => CliRun.Live(_mounted ?? _folder.Path, args);

    private void Prepare(string only, string root)
    {
        Assert.Equal(0, CliRun.Demo(root, "ws").ExitCode);
        var track = CliRun.Live(root, "--dir", Path.Combine(root, "ws"), "track", "--on", "workbench", "--cores", "1", "--only", only, "--rehearsal");
        Assert.True(track.ExitCode == 0, track.Err);
    }

    private int Active()
    {
        var tick = Cli("--dir", Ws(), "tick", "--json");
        Assert.True(tick.ExitCode == 0, tick.Err + tick.Out);
        return tick.Json().GetProperty("active").GetInt32();
    }

    private void TickUntilIdle(TimeSpan limit)
    {
        var deadline = DateTime.UtcNow + limit;
        while (DateTime.UtcNow < deadline)
        {
            if (Active() == 0)
            {
                return;
            }

            Thread.Sleep(600);
        }

        Assert.Fail("the campaign did not finish in time");
    }

    private static object? Scalar(string database, string sql)
    {
        using var connection = new SqliteConnection($"Data Source={database};Pooling=False;Mode=ReadOnly");
        connection.Open();
        using var command = connection.CreateCommand();
        command.CommandText = sql;
        return command.ExecuteScalar();
    }

    [Fact]
    public void A_corrupt_newest_checkpoint_is_passed_over_for_the_previous_valid_one_and_the_event_says_so()
    {
        Prepare("sm-q1-a00", _folder.Path);
        var config = File.ReadAllText(Ws("campaign.toml")).Replace("[tracking]\n", "[tracking]\ncheckpoint_checksum = true\n", StringComparison.Ordinal);
        File.WriteAllText(Ws("campaign.toml"), config);

        Assert.Equal(3, Active()); // submits the first legs
        // Let leg 1 of every run end (3 s wall time, checkpoints every 500 M), then damage res1's newest checkpoint
        // the way a crash in the middle of a write or a bad disk would: truncated, its marker still there.
        var folder = Ws("runs/sm-q1-a00.res1.r1/checkpoints");
        var deadline = DateTime.UtcNow + TimeSpan.FromSeconds(30);
        var name = WorkspaceId.JobName(Ws(), "sm-q1-a00.res1.r1", 1);
        bool Ended() => Directory.EnumerateFiles(Ws("local-runner"), "request.json", SearchOption.AllDirectories)
            .Any(f => JsonDocument.Parse(File.ReadAllText(f)).RootElement.GetProperty("Name").GetString() == name && File.Exists(Path.Combine(Path.GetDirectoryName(f)!, "exit.json")));
        while (DateTime.UtcNow < deadline && !Ended())
        {
            Thread.Sleep(200);
        }

        Assert.True(Ended(), "leg 1 did not end");

        var files = Directory.EnumerateFiles(folder, "ckpt-*.json").Order(StringComparer.Ordinal).ToList();
        Assert.True(files.Count >= 2, "leg 1 wrote " + files.Count + " checkpoints");
        var newest = files[^1];
        var bytes = File.ReadAllBytes(newest);
        File.WriteAllBytes(newest, bytes[..(bytes.Length / 2)]);

        TickUntilIdle(TimeSpan.FromSeconds(120));
        var database = Ws("campaign.db");
        var restartFrom = (string?)Scalar(database, "SELECT restart_from FROM legs WHERE run_id = 'sm-q1-a00.res1.r1' AND number = 2");
        Assert.Equal(Path.GetFileName(files[^2]), Path.GetFileName(restartFrom));
        var why = (string?)Scalar(database, "SELECT why FROM run_events WHERE run_id = 'sm-q1-a00.res1.r1' AND why LIKE '%passed over%' ORDER BY id LIMIT 1");
        Assert.NotNull(why);
        Assert.Contains(Path.GetFileName(newest), why, StringComparison.Ordinal);
        Assert.Contains("checksum", why, StringComparison.Ordinal);
        output.WriteLine(why);
        Assert.Equal("finished", (string?)Scalar(database, "SELECT state FROM tracked_runs WHERE run_id = 'sm-q1-a00.res1.r1'"));
    }

    [Fact]
    public async Task Commands_and_the_daemon_at_the_same_time_never_meet_a_locked_database_and_lose_no_write()
    {
        Prepare("sm-q1-a00,sm-q2-a04", _folder.Path);
        var before = (long)Scalar(Ws("campaign.db"), "SELECT COUNT(*) FROM run_logs")!;
        var plansBefore = (long)Scalar(Ws("campaign.db"), "SELECT COUNT(*) FROM plans")!;

        // The daemon in its own process, a cycle every second.
        var daemon = new ProcessStartInfo(Path.Combine(AppContext.BaseDirectory, "campaign")) { RedirectStandardOutput = true, RedirectStandardError = true, UseShellExecute = false };
        foreach (var a in new[] { "--dir", Ws(), "watch", "--interval", "1", "--until-done" })
        {
            daemon.ArgumentList.Add(a);
        }

        using var watch = Process.Start(daemon)!;
        _daemons.Add(watch);
        var daemonErr = watch.StandardError.ReadToEndAsync();
        var daemonOut = watch.StandardOutput.ReadToEndAsync();

        // Two writers and a reader in parallel with it: log imports (one new run each), re-plans, status.
        var logLines = File.ReadAllLines(Path.Combine(RepositoryRoot.Path, "demo-campaign", "run-logs.csv"));
        const int imports = 12;
        const int plans = 6;
        var failures = new System.Collections.Concurrent.ConcurrentBag<string>();
        void Check(CliRun run, string what)
        {
            if (run.ExitCode != 0 || run.Err.Contains("locked", StringComparison.OrdinalIgnoreCase))
            {
                failures.Add($"{what}: exit {run.ExitCode}: {run.Err}");
            }
        }

        Parallel.Invoke(
            () =>
            {
                for (var i = 0; i < imports; i++)
                {
                    var file = Path.Combine(_folder.Path, $"more-{i}.csv");
                    File.WriteAllLines(file, new[] { logLines[0], "race-" + i + logLines[1 + i][6..] });
                    Check(Cli("--dir", Ws(), "logs", "import", file), "logs import " + i);
                }
            },
            () =>
            {
                for (var i = 0; i < plans; i++)
                {
                    Check(Cli("--dir", Ws(), "select", Ws("candidates.csv"), "--save", "--budget", (2_000_000 + i).ToString(System.Globalization.CultureInfo.InvariantCulture)), "select --save " + i);
                }
            },
            () =>
            {
                for (var i = 0; i < 20; i++)
                {
                    Check(Cli("--dir", Ws(), "status", "--json"), "status " + i);
                    Thread.Sleep(100);
                }
            });

        Assert.True(watch.WaitForExit(TimeSpan.FromSeconds(150)), "the daemon did not finish the runs");
        Assert.Empty(failures);
        Assert.Equal(0, watch.ExitCode);
        Assert.DoesNotContain("locked", await daemonErr + await daemonOut, StringComparison.OrdinalIgnoreCase);
        Assert.Equal(before + imports, (long)Scalar(Ws("campaign.db"), "SELECT COUNT(*) FROM run_logs")!);
        Assert.Equal(plansBefore + plans, (long)Scalar(Ws("campaign.db"), "SELECT COUNT(*) FROM plans")!);
        Assert.Equal(6L, (long)Scalar(Ws("campaign.db"), "SELECT COUNT(*) FROM tracked_runs WHERE state = 'finished'")!);
        Assert.Equal("ok", Scalar(Ws("campaign.db"), "PRAGMA integrity_check"));
    }

    [MountFact]
    public async Task A_full_disk_gives_a_clear_error_corrupts_nothing_and_the_daemon_resumes_when_space_returns()
    {
        _mounted = Path.Combine(_folder.Path, "small-disk");
        Directory.CreateDirectory(_mounted);
        Assert.Null(Mount(_mounted, "24m"));
        Prepare("sm-q1-a00", _mounted);
        var logsBefore = (long)Scalar(Ws("campaign.db"), "SELECT COUNT(*) FROM run_logs")!;

        // The daemon runs; then the disk fills up to the last byte under it.
        var start = new ProcessStartInfo(Path.Combine(AppContext.BaseDirectory, "campaign")) { RedirectStandardOutput = true, RedirectStandardError = true, UseShellExecute = false };
        foreach (var a in new[] { "--dir", Ws(), "watch", "--interval", "1", "--until-done" })
        {
            start.ArgumentList.Add(a);
        }

        using var watch = Process.Start(start)!;
        _daemons.Add(watch);
        var daemonOut = watch.StandardOutput.ReadToEndAsync();
        var daemonErr = watch.StandardError.ReadToEndAsync();
        await Task.Delay(2500);
        var filler = Path.Combine(_mounted, "filler");
        using (var stream = new FileStream(filler, FileMode.Create))
        {
            var block = new byte[64 * 1024];
            try
            {
                while (true)
                {
                    stream.Write(block);
                    stream.Flush();
                }
            }
            catch (IOException)
            {
            }
        }
        var import = Cli("--dir", Ws(), "logs", "import", Path.Combine(RepositoryRoot.Path, "demo-campaign", "run-logs.csv"), "--replace");
        output.WriteLine($"import on a full disk: exit {import.ExitCode}: {import.Err}");
        Assert.Equal(3, import.ExitCode);
        Assert.Contains("the disk is full", import.Err, StringComparison.Ordinal);
        await Task.Delay(6000); // the daemon's cycles meet the full disk meanwhile
        if (watch.HasExited)
        {
            Assert.Fail("the daemon stopped on a full disk: " + await daemonErr);
        }


        // Space returns: nothing was corrupted or half-written, and the daemon carries the campaign to its end with
        // every leg submitted once.
        File.Delete(filler);
        Assert.True(watch.WaitForExit(TimeSpan.FromSeconds(150)), "the daemon did not finish after space returned");
        var errors = await daemonErr;
        output.WriteLine("daemon while the disk was full: " + string.Join(" | ", errors.Split('\n').Where(l => l.Length > 0).Take(4)));
        Assert.Equal(0, watch.ExitCode);
        // (A cycle with nothing to record writes nothing and passes even on a full disk; one that must write fails
        // cleanly with "cycle failed, will try again" and the daemon carries on.)
        Assert.DoesNotContain("Unhandled", errors, StringComparison.Ordinal);
        Assert.Equal("ok", Scalar(Ws("campaign.db"), "PRAGMA integrity_check"));
        Assert.Equal(logsBefore, (long)Scalar(Ws("campaign.db"), "SELECT COUNT(*) FROM run_logs")!);
        Assert.Equal(3L, (long)Scalar(Ws("campaign.db"), "SELECT COUNT(*) FROM tracked_runs WHERE state = 'finished'")!);
        var names = LocalJobs.SubmittedNames(Ws());
        Assert.Equal(names.Count, names.Distinct().Count());
        _ = await daemonOut;
    }

    [MountFact]
    public void A_read_only_disk_gives_a_clear_error_and_nothing_changes()
    {
        _mounted = Path.Combine(_folder.Path, "small-disk");
        Directory.CreateDirectory(_mounted);
        Assert.Null(Mount(_mounted, "24m"));
        Assert.Equal(0, CliRun.Demo(_mounted, "ws").ExitCode);
        var before = File.ReadAllBytes(Ws("campaign.db"));
        Assert.Equal(0, Run("mount", "-o", "remount,ro", _mounted).Code);
        try
        {
            var import = Cli("--dir", Ws(), "logs", "import", Path.Combine(RepositoryRoot.Path, "demo-campaign", "run-logs.csv"), "--replace");
            output.WriteLine($"import on a read-only disk: exit {import.ExitCode}: {import.Err}");
            Assert.Equal(3, import.ExitCode);
            Assert.Contains("the workspace cannot be written (a read-only file system or no write permission)", import.Err, StringComparison.Ordinal);
            var status = Cli("--dir", Ws(), "status");
            output.WriteLine($"status on a read-only disk: exit {status.ExitCode}: {status.Err}");
        }
        finally
        {
            Assert.Equal(0, Run("mount", "-o", "remount,rw", _mounted).Code);
        }

        Assert.Equal(before, File.ReadAllBytes(Ws("campaign.db")));
        Assert.Equal(0, Cli("--dir", Ws(), "logs", "import", Path.Combine(RepositoryRoot.Path, "demo-campaign", "run-logs.csv"), "--replace").ExitCode);
    }
}
