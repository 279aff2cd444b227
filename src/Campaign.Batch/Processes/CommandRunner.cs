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

    /// <summary>
    /// Runs <paramref name="fileName"/> with <paramref name="arguments"/>; extra environment for this call in
    /// <paramref name="environment"/>; <paramref name="input"/> written to its standard input (closed after).
    /// </summary>
    public async Task<CommandResult> RunAsync(string fileName, IEnumerable<string> arguments, CancellationToken cancellationToken, IReadOnlyDictionary<string, string>? environment = null, string? workingDirectory = null, string? input = null)
    {
        var start = new ProcessStartInfo(fileName)
        {
            WorkingDirectory = workingDirectory ?? "",
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            RedirectStandardInput = true,
            StandardInputEncoding = new System.Text.UTF8Encoding(false),
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

        var output = process.StandardOutput.ReadToEndAsync(CancellationToken.None);
        var error = process.StandardError.ReadToEndAsync(CancellationToken.None);
        await WriteInput(process, input).ConfigureAwait(false);
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

    private static async Task WriteInput(Process process, string? input)
    {
        try
        {
            if (input is { Length: > 0 })
            {
                await process.StandardInput.WriteAsync(input).ConfigureAwait(false);
            }

            process.StandardInput.Close();
        }
        catch (IOException)
        {
            // The command ended without reading all its input; its exit code and output say why.
        }
    }
}
