using System.Diagnostics;
using System.Text.Json;

namespace Campaign.Tracking;

/// <summary>One thing worth telling a human: a run changed state.</summary>
public sealed record Notice(string At, string RunId, string From, string To, string Why);

/// <summary>
/// Runs the configured notification command once per notice, in the workspace folder, with the notice as JSON
/// on standard input (argument list, no shell). A failing command is reported, never fatal. A command that hangs
/// is stopped (with everything it started) after <see cref="PerNotice"/>, and a cycle spends at most
/// <see cref="PerCycle"/> on notices: the rest are reported as not sent, so a broken mail relay never holds the
/// campaign up.
/// </summary>
public sealed class Notifier
{
    /// <summary>Longest wait for one notice.</summary>
    public static readonly TimeSpan PerNotice = TimeSpan.FromSeconds(5);

    /// <summary>Longest time a cycle spends on notices.</summary>
    public static readonly TimeSpan PerCycle = TimeSpan.FromSeconds(10);

    private readonly IReadOnlyList<string> _command;
    private readonly string _folder;

    public Notifier(IReadOnlyList<string> command, string folder)
    {
        _command = command;
        _folder = folder;
    }

    /// <summary>Sends the notices; returns one message per failure.</summary>
    public async Task<IReadOnlyList<string>> SendAsync(IReadOnlyList<Notice> notices, CancellationToken cancellationToken)
    {
        var failures = new List<string>();
        if (_command.Count == 0)
        {
            return failures;
        }

        var budget = Stopwatch.StartNew();
        for (var i = 0; i < notices.Count; i++)
        {
            var notice = notices[i];
            if (budget.Elapsed >= PerCycle)
            {
                failures.Add($"notify command: {notices.Count - i} notices not sent: the notices of this cycle took more than {PerCycle.TotalSeconds:0} s (they are in the event log)");
                break;
            }

            Process? process = null;
            try
            {
                var start = new ProcessStartInfo(_command[0]) { RedirectStandardInput = true, UseShellExecute = false, WorkingDirectory = _folder };
                foreach (var argument in _command.Skip(1))
                {
                    start.ArgumentList.Add(argument);
                }

                process = Process.Start(start)!;
                try
                {
                    await process.StandardInput.WriteAsync(JsonSerializer.Serialize(notice, new JsonSerializerOptions { PropertyNamingPolicy = JsonNamingPolicy.SnakeCaseLower })).ConfigureAwait(false);
                    process.StandardInput.Close();
                }
                catch (IOException)
                {
                    // It does not read its input (or already exited): its exit says how it went.
                }

                using var timeout = CancellationTokenSource.CreateLinkedTokenSource(cancellationToken);
                timeout.CancelAfter(PerNotice);
                try
                {
                    await process.WaitForExitAsync(timeout.Token).ConfigureAwait(false);
                }
                catch (OperationCanceledException) when (!cancellationToken.IsCancellationRequested)
                {
                    process.Kill(entireProcessTree: true);
                    failures.Add($"notify command did not finish within {PerNotice.TotalSeconds:0} s and was stopped (notice: {notice.RunId} {notice.From} -> {notice.To})");
                    continue;
                }

                if (process.ExitCode != 0)
                {
                    failures.Add($"notify command exited with {process.ExitCode} (notice: {notice.RunId} {notice.From} -> {notice.To})");
                }
            }
            catch (Exception e) when (e is System.ComponentModel.Win32Exception or InvalidOperationException or IOException)
            {
                failures.Add("notify command failed: " + e.Message);
            }
            finally
            {
                process?.Dispose();
            }
        }

        return failures;
    }
}
