using System.Diagnostics;
using System.Text.Json;

namespace Campaign.Tracking;

/// <summary>One thing worth telling a human: a run changed state.</summary>
public sealed record Notice(string At, string RunId, string From, string To, string Why);

/// <summary>
/// Runs the configured notification command once per notice, in the workspace folder, with the notice as JSON
/// on standard input (argument list, no shell). A failing command is reported, never fatal.
/// </summary>
public sealed class Notifier
{
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

        foreach (var notice in notices)
        {
            try
            {
                var start = new ProcessStartInfo(_command[0]) { RedirectStandardInput = true, UseShellExecute = false, WorkingDirectory = _folder };
                foreach (var argument in _command.Skip(1))
                {
                    start.ArgumentList.Add(argument);
                }

                using var process = Process.Start(start)!;
                await process.StandardInput.WriteAsync(JsonSerializer.Serialize(notice, new JsonSerializerOptions { PropertyNamingPolicy = JsonNamingPolicy.SnakeCaseLower })).ConfigureAwait(false);
                process.StandardInput.Close();
                using var timeout = CancellationTokenSource.CreateLinkedTokenSource(cancellationToken);
                timeout.CancelAfter(TimeSpan.FromSeconds(30));
                await process.WaitForExitAsync(timeout.Token).ConfigureAwait(false);
                if (process.ExitCode != 0)
                {
                    failures.Add($"notify command exited with {process.ExitCode}");
                }
            }
            catch (Exception e) when (e is System.ComponentModel.Win32Exception or InvalidOperationException or OperationCanceledException or IOException)
            {
                failures.Add("notify command failed: " + e.Message);
            }
        }

        return failures;
    }
}
