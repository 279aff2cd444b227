using System.ComponentModel;
using System.Diagnostics;

namespace Campaign.Batch.Processes;

/// <summary>
/// Runs a command with an argument list (never through a shell), captures its output, and kills it when the
/// cancellation token fires. A command that cannot be started is a permanent <see cref="BatchSystemException"/>.
/// </summary>
public sealed class CommandRunner
{
    private readonly IReadOnlyDictionary<string, string> _environment;

    /// <summary>Creates a runner that adds <paramref name="environment"/> to every command's environment.</summary>
    public CommandRunner(IReadOnlyDictionary<string, string>? environment = null) => _environment = environment ?? new Dictionary<string, string>();

    /// <summary>Runs <paramref name="fileName"/> with <paramref name="arguments"/>; extra environment for this call in <paramref name="environment"/>.</summary>
    public async Task<CommandResult> RunAsync(string fileName, IEnumerable<string> arguments, CancellationToken cancellationToken, IReadOnlyDictionary<string, string>? environment = null, string? workingDirectory = null)
    {
        var start = new ProcessStartInfo(fileName)
        {
            WorkingDirectory = workingDirectory ?? "",
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            RedirectStandardInput = true,
            UseShellExecute = false,
        };
        foreach (var argument in arguments)
        {
            start.ArgumentList.Add(argument);
        }

        foreach (var (key, value) in _environment)
        {
            start.Environment[key] = value;
        }

        foreach (var (key, value) in environment ?? new Dictionary<string, string>())
        {
            start.Environment[key] = value;
        }

        using var process = new Process { StartInfo = start };
        try
        {
            process.Start();
        }
        catch (Win32Exception e)
        {
            throw new BatchSystemException(BatchErrorKind.Permanent, $"cannot run {fileName}: {e.Message} (is it installed and on PATH?)", e);
        }

        process.StandardInput.Close();
        var output = process.StandardOutput.ReadToEndAsync(CancellationToken.None);
        var error = process.StandardError.ReadToEndAsync(CancellationToken.None);
        try
        {
            await process.WaitForExitAsync(cancellationToken).ConfigureAwait(false);
        }
        catch (OperationCanceledException)
        {
            try
            {
                process.Kill(entireProcessTree: true);
            }
            catch (InvalidOperationException)
            {
            }

            throw;
        }

        return new CommandResult(process.ExitCode, await output.ConfigureAwait(false), await error.ConfigureAwait(false));
    }
}
