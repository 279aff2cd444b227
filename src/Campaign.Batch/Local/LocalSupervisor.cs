using System.Diagnostics;
using System.Globalization;
using System.Runtime.InteropServices;

namespace Campaign.Batch.Local;

/// <summary>
/// The process that runs one local job: started detached (in its own session) by the local runner, it starts
/// the batch script in a new session and process group, sends the warning signal before the limit, SIGTERM at
/// the limit and SIGKILL after the grace period, honours cancellation (SIGTERM to the supervisor, or a cancel
/// file), and writes exit.json when the script ends. Hosted by any executable that calls <see cref="Run"/>
/// when its arguments are <see cref="Command"/> and a job folder (the campaign command does).
/// </summary>
public static class LocalSupervisor
{
    /// <summary>The first argument that makes an executable act as the supervisor.</summary>
    public const string Command = "__local-supervise";

    /// <summary>Supervises the job in <paramref name="jobFolder"/> until it ends; returns 0.</summary>
    public static int Run(string jobFolder)
    {
        var files = new LocalJobFiles(jobFolder);
        var job = files.ReadRequest();
        var cancel = new ManualResetEventSlim(false);
        using var term = PosixSignalRegistration.Create(PosixSignal.SIGTERM, context =>
        {
            context.Cancel = true;
            cancel.Set();
        });

        if (File.Exists(files.CancelPath))
        {
            files.WriteExit(new LocalExitRecord("stopped", null, null, 0, Now()));
            return 0;
        }

        var start = new ProcessStartInfo("setsid")
        {
            WorkingDirectory = job.WorkingDirectory,
            UseShellExecute = false,
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            RedirectStandardInput = true,
        };
        start.ArgumentList.Add(job.Script);
        foreach (var (key, value) in job.Environment)
        {
            start.Environment[key] = value;
        }

        start.Environment["CAMPAIGN_JOB_ID"] = job.Id;
        var watch = Stopwatch.StartNew();
        using var process = new Process { StartInfo = start };
        try
        {
            process.Start();
        }
        catch (Exception e) when (e is System.ComponentModel.Win32Exception or InvalidOperationException)
        {
            files.WriteExit(new LocalExitRecord("no_start", null, null, 0, Now()));
            return 0;
        }

        process.StandardInput.Close();
        var pid = process.Id;
        // The script's pid lets the runner see the job alive if this supervisor dies. On a full disk it cannot be
        // written yet: the job runs on all the same (this supervisor is alive and says so) and the write is tried
        // again while it waits.
        var scriptTicks = Posix.StartTicks(pid);
        bool TryWriteScriptPid()
        {
            try
            {
                LocalJobFiles.WritePid(files.ScriptPidPath, pid, scriptTicks!.Value);
                return true;
            }
            catch (IOException)
            {
                return false;
            }
        }

        var pidWritten = scriptTicks is null || TryWriteScriptPid();

        using var output = new FileStream(job.OutputPath, FileMode.Append, FileAccess.Write, FileShare.ReadWrite);
        using var error = job.ErrorPath == job.OutputPath ? null : new FileStream(job.ErrorPath, FileMode.Append, FileAccess.Write, FileShare.ReadWrite);
        var pumpOut = process.StandardOutput.BaseStream.CopyToAsync(output);
        var pumpErr = process.StandardError.BaseStream.CopyToAsync((Stream?)error ?? output);

        var limit = TimeSpan.FromSeconds(job.WallSeconds);
        var warnAt = job.WarningSignal is null ? TimeSpan.MaxValue : limit - TimeSpan.FromSeconds(job.WarningSeconds);
        var grace = TimeSpan.FromSeconds(job.GraceSeconds);
        string? ending = null;
        var warned = false;
        TimeSpan? killAt = null;
        while (!process.WaitForExit(200))
        {
            pidWritten = pidWritten || TryWriteScriptPid();
            var now = watch.Elapsed;
            if (ending is null && (cancel.IsSet || File.Exists(files.CancelPath)))
            {
                ending = "stopped";
                Posix.SignalGroup(pid, Posix.Signals["TERM"]);
                killAt = now + grace;
            }
            else if (ending is null && now >= limit)
            {
                ending = "out_of_time";
                Posix.SignalGroup(pid, Posix.Signals["TERM"]);
                killAt = now + grace;
            }
            else if (!warned && now >= warnAt)
            {
                warned = true;
                Posix.SignalGroup(pid, Posix.Signals[job.WarningSignal!]);
            }

            if (killAt is { } k && now >= k)
            {
                Posix.SignalGroup(pid, Posix.Signals["KILL"]);
            }
        }

        // The script is gone; nothing it started may outlive the job.
        Posix.SignalGroup(pid, Posix.Signals["KILL"]);
        Task.WaitAll(new Task[] { pumpOut, pumpErr }, TimeSpan.FromSeconds(5));
        var code = process.ExitCode;
        int? signal = code > 128 ? code - 128 : 0;
        var state = ending ?? (code == 0 ? "succeeded" : "crashed");
        var record = new LocalExitRecord(state, code, signal, watch.Elapsed.TotalSeconds, Now());
        // The outcome must not be lost to a full or failing disk: keep trying (the job counts as running meanwhile).
        for (var wait = 1; ; wait = Math.Min(wait * 2, 60))
        {
            try
            {
                files.WriteExit(record);
                return 0;
            }
            catch (IOException)
            {
                Thread.Sleep(TimeSpan.FromSeconds(wait));
            }
        }
    }

    private static string Now() => DateTimeOffset.UtcNow.ToString("O", CultureInfo.InvariantCulture);
}
