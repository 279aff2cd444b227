using System.Globalization;
using System.Text.RegularExpressions;
using Campaign.Batch.Processes;

namespace Campaign.Batch.Remote;

/// <summary>How one remote cluster is reached with the system OpenSSH client.</summary>
/// <param name="Host">The ssh destination: a Host name from the OpenSSH configuration (or user@host).</param>
/// <param name="ConfigFile">An OpenSSH configuration file (ssh -F); null for the user's own.</param>
/// <param name="ControlPath">The socket of the shared (master) connection, inside the workspace.</param>
/// <param name="RequiresMaster">True when the user opens the master connection by hand (multi-factor sites): the
/// tracker then never logs in by itself.</param>
/// <param name="ConnectTimeout">How long a new connection may take before the site counts as not answering.</param>
/// <param name="Persist">How long a master connection the tracker opened itself stays after its last use.</param>
public sealed record SshSettings(string Host, string? ConfigFile, string ControlPath, bool RequiresMaster, TimeSpan ConnectTimeout, string Persist = "10m");

/// <summary>
/// Runs commands on a remote site through the system OpenSSH client: connection sharing (ControlMaster, ControlPath
/// inside the workspace, ControlPersist), BatchMode=yes (never a password or passphrase prompt) and strict host-key
/// checking (a changed or unknown host key is refused: nothing runs). Every word of a remote command is quoted with
/// <see cref="ShellQuote"/>; bulk data travels on standard input, never on the command line. On a site that requires
/// a master connection the tracker never opens one: without it, the call fails with the one command that opens it.
/// The remote login shell must be a POSIX shell (sh, bash, ksh, zsh; not csh).
/// </summary>
public sealed partial class SshShell : IShell
{
    /// <summary>What ssh exits with when it, not the remote command, failed.</summary>
    public const int SshFailed = 255;

    private const int NoSuchFile = 44;

    private readonly CommandRunner _runner = new();
    private int _calls;

    /// <summary>Creates the shell; the folder of the control socket is created, readable by the owner only.</summary>
    public SshShell(SshSettings settings)
    {
        Settings = settings;
        var folder = Path.GetDirectoryName(settings.ControlPath);
        if (folder is { Length: > 0 } && !Directory.Exists(folder))
        {
            Directory.CreateDirectory(folder, UnixFileMode.UserRead | UnixFileMode.UserWrite | UnixFileMode.UserExecute);
        }
    }

    /// <summary>The settings.</summary>
    public SshSettings Settings { get; }

    /// <inheritdoc />
    public string Where => "ssh " + Settings.Host;

    /// <summary>ssh calls made so far that reach the remote site (the benchmark counts them).</summary>
    public int Calls => _calls;

    /// <summary>The command a user runs to open the master connection this shell uses (for multi-factor sites).</summary>
    public string MasterCommand =>
        ShellQuote.Display(new[] { "ssh" }.Concat(ConfigArguments()).Concat(new[]
        {
            "-o", "ControlPath=" + Settings.ControlPath, "-o", "ControlMaster=yes", "-o", "ControlPersist=yes", "-fN", Settings.Host,
        }));

    /// <summary>The remote command line for a program, its arguments, environment and folder: every word quoted.</summary>
    public static string RemoteCommand(string fileName, IReadOnlyList<string> arguments, IReadOnlyDictionary<string, string>? environment = null, string? workingDirectory = null)
    {
        var words = new List<string>();
        if (environment is { Count: > 0 })
        {
            words.Add("env");
            words.AddRange(environment.OrderBy(p => p.Key, StringComparer.Ordinal).Select(p => p.Key + "=" + p.Value));
        }

        words.Add(fileName);
        words.AddRange(arguments);
        var line = "exec " + ShellQuote.Command(words);
        return workingDirectory is null ? line : "cd -- " + ShellQuote.Word(workingDirectory) + " && " + line;
    }

    /// <inheritdoc />
    public async Task<CommandResult> RunAsync(string fileName, IReadOnlyList<string> arguments, CancellationToken cancellationToken, IReadOnlyDictionary<string, string>? environment = null, string? workingDirectory = null, string? input = null)
    {
        foreach (var name in environment?.Keys ?? Enumerable.Empty<string>())
        {
            if (!EnvironmentName().IsMatch(name))
            {
                throw new BatchSystemException(BatchErrorKind.Rejected, $"environment variable name = {name}: expected letters, digits and '_', not starting with a digit");
            }
        }

        var remote = RemoteCommand(fileName, arguments, environment, workingDirectory);
        var ssh = Arguments().Concat(new[] { "--", Settings.Host, remote }).ToList();
        Interlocked.Increment(ref _calls);
        var result = await _runner.RunAsync("ssh", ssh, cancellationToken, input: input).ConfigureAwait(false);
        if (result.ExitCode == SshFailed)
        {
            throw await Classify(result, cancellationToken).ConfigureAwait(false);
        }

        return result;
    }

    /// <inheritdoc />
    public async Task<string?> ReadFileAsync(string path, CancellationToken cancellationToken)
    {
        var result = await RunAsync("sh", new[] { "-c", $"test -f \"$1\" || exit {NoSuchFile}; exec cat -- \"$1\"", "sh", path }, cancellationToken).ConfigureAwait(false);
        return result.ExitCode switch
        {
            0 => result.StandardOutput,
            NoSuchFile => null,
            _ => throw new BatchSystemException(BatchErrorKind.Transient, $"{Where}: cannot read {path}: {BatchErrorText.FirstLine(result.StandardError)}"),
        };
    }

    /// <summary>True when a master connection is open on the control socket (asks the local socket only).</summary>
    public async Task<bool> MasterIsOpenAsync(CancellationToken cancellationToken)
    {
        var check = ConfigArguments().Concat(new[] { "-o", "ControlPath=" + Settings.ControlPath, "-O", "check", "--", Settings.Host }).ToList();
        var result = await _runner.RunAsync("ssh", check, cancellationToken).ConfigureAwait(false);
        return result.ExitCode == 0;
    }

    /// <summary>Closes the master connection the tracker opened itself (not one the user opened by hand).</summary>
    public async Task CloseOwnMasterAsync(CancellationToken cancellationToken)
    {
        if (Settings.RequiresMaster)
        {
            return;
        }

        var exit = ConfigArguments().Concat(new[] { "-o", "ControlPath=" + Settings.ControlPath, "-O", "exit", "--", Settings.Host }).ToList();
        await _runner.RunAsync("ssh", exit, cancellationToken).ConfigureAwait(false);
    }

    /// <summary>The ssh options every call uses.</summary>
    public IReadOnlyList<string> Arguments()
    {
        var options = new List<string>(ConfigArguments())
        {
            "-o", "BatchMode=yes",
            "-o", "StrictHostKeyChecking=yes",
            "-o", "ControlPath=" + Settings.ControlPath,
            "-o", "ConnectTimeout=" + Math.Max(1, (int)Settings.ConnectTimeout.TotalSeconds).ToString(CultureInfo.InvariantCulture),
            "-o", "ServerAliveInterval=15",
            "-o", "ServerAliveCountMax=3",
        };
        if (Settings.RequiresMaster)
        {
            // Only through the master the user opened: without it no new login is even tried (ProxyCommand given
            // here comes before any in the user's configuration, and fails at once).
            options.AddRange(new[] { "-o", "ControlMaster=no", "-o", "ProxyCommand=false" });
        }
        else
        {
            options.AddRange(new[] { "-o", "ControlMaster=auto", "-o", "ControlPersist=" + Settings.Persist });
        }

        return options;
    }

    private IEnumerable<string> ConfigArguments() => Settings.ConfigFile is { } config ? new[] { "-F", config } : Array.Empty<string>();

    /// <summary>
    /// ssh itself failed. A refused host key and a refused login are the site's configuration (permanent: nothing
    /// ran, and retrying cannot help); a missing master on a site that needs one says how to open it; anything else
    /// (refused or dropped connection, no answer) is transient.
    /// </summary>
    private async Task<BatchSystemException> Classify(CommandResult result, CancellationToken cancellationToken)
    {
        var text = result.StandardError.Trim();
        if (text.Contains("REMOTE HOST IDENTIFICATION HAS CHANGED", StringComparison.OrdinalIgnoreCase)
            || text.Contains("Host key verification failed", StringComparison.OrdinalIgnoreCase)
            || text.Contains("host key is known for", StringComparison.OrdinalIgnoreCase))
        {
            return new BatchSystemException(BatchErrorKind.Permanent,
                $"{Settings.Host}: host key refused (it changed, or is not in known_hosts): nothing was run. Check the key's fingerprint with the site before you accept it (ssh-keygen -R, then log in once by hand)\n{text}");
        }

        if (Settings.RequiresMaster && !await MasterIsOpenAsync(cancellationToken).ConfigureAwait(false))
        {
            return new BatchSystemException(BatchErrorKind.Permanent,
                $"{Settings.Host}: no master connection (the site needs one; Campaign never logs in by itself there): open it with: {MasterCommand}");
        }

        if (text.Contains("Permission denied", StringComparison.OrdinalIgnoreCase))
        {
            return new BatchSystemException(BatchErrorKind.Permanent,
                $"{Settings.Host}: login refused (BatchMode: no password or passphrase prompt; use a key in ssh-agent, a certificate, or a master connection)\n{text}");
        }

        return new BatchSystemException(BatchErrorKind.Transient, $"{Settings.Host}: ssh failed ({(text.Length == 0 ? "exit 255" : BatchErrorText.FirstLine(text))})\n{text}");
    }

    [GeneratedRegex("^[A-Za-z_][A-Za-z0-9_]*\\z")]
    private static partial Regex EnvironmentName();
}
