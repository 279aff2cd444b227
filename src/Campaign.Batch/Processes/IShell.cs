namespace Campaign.Batch.Processes;

/// <summary>
/// Where a batch system's commands run: on this host (<see cref="LocalShell"/>) or on a remote site through the
/// system OpenSSH client (<see cref="Remote.SshShell"/>). Adapters build argument lists; a shell runs them without
/// re-splitting any word (a remote shell quotes every word with <see cref="Remote.ShellQuote"/>).
/// </summary>
public interface IShell
{
    /// <summary>Where the commands run, for messages ("this host", "ssh halyard-login").</summary>
    string Where { get; }

    /// <summary>
    /// Runs <paramref name="fileName"/> with <paramref name="arguments"/>, with extra <paramref name="environment"/>, in
    /// <paramref name="workingDirectory"/> when given, with <paramref name="input"/> on standard input. The command's own
    /// exit code comes back in the result; a failure to reach the place it runs is a <see cref="BatchSystemException"/>.
    /// </summary>
    Task<CommandResult> RunAsync(string fileName, IReadOnlyList<string> arguments, CancellationToken cancellationToken, IReadOnlyDictionary<string, string>? environment = null, string? workingDirectory = null, string? input = null);

    /// <summary>The text of a file where the commands run, or null when there is no such file.</summary>
    Task<string?> ReadFileAsync(string path, CancellationToken cancellationToken);
}

/// <summary>Runs commands on this host, with argument lists (never through a shell).</summary>
public sealed class LocalShell : IShell
{
    private readonly CommandRunner _runner;

    /// <summary>Creates a shell that adds <paramref name="environment"/> to every command's environment.</summary>
    public LocalShell(IReadOnlyDictionary<string, string>? environment = null) => _runner = new CommandRunner(environment);

    /// <inheritdoc />
    public string Where => "this host";

    /// <inheritdoc />
    public Task<CommandResult> RunAsync(string fileName, IReadOnlyList<string> arguments, CancellationToken cancellationToken, IReadOnlyDictionary<string, string>? environment = null, string? workingDirectory = null, string? input = null) =>
        _runner.RunAsync(fileName, arguments, cancellationToken, environment, workingDirectory, input);

    /// <inheritdoc />
    public async Task<string?> ReadFileAsync(string path, CancellationToken cancellationToken)
    {
        if (!File.Exists(path))
        {
            return null;
        }

        try
        {
            return await File.ReadAllTextAsync(path, cancellationToken).ConfigureAwait(false);
        }
        catch (IOException e)
        {
            throw new BatchSystemException(BatchErrorKind.Transient, $"cannot read {path}: {e.Message}", e);
        }
    }
}
