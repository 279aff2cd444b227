using System.Diagnostics;
using System.Net;
using System.Net.Sockets;

namespace Campaign.Testing;

/// <summary>
/// An sshd of the tests' own on 127.0.0.1 and a free port, with host and user keys generated in a temporary folder
/// and a client configuration (Host names "site-a" and "site-b") that reaches it: no system configuration is used
/// or changed. Outside CI the SSH tests are skipped (with the reason) when sshd is not installed; under CI
/// (CI=true) they fail instead.
/// </summary>
public sealed class SshServer : IDisposable
{
    private const string Sshd = "/usr/sbin/sshd";
    private Process? _process;

    public SshServer()
    {
        Folder = Directory.CreateTempSubdirectory("cmp-ssh-").FullName;
        Port = FreePort();
        Keygen("host_key");
        Keygen("user_key");
        File.Copy(Path.Combine(Folder, "user_key.pub"), Path.Combine(Folder, "authorized_keys"));
        File.WriteAllText(Path.Combine(Folder, "sshd_config"), $"""
            Port {Port}
            ListenAddress 127.0.0.1
            HostKey {Folder}/host_key
            AuthorizedKeysFile {Folder}/authorized_keys
            PasswordAuthentication no
            KbdInteractiveAuthentication no
            PubkeyAuthentication yes
            StrictModes no
            PermitRootLogin prohibit-password
            UsePAM no
            PidFile {Folder}/sshd.pid
            MaxStartups 100
            MaxSessions 100

            """);
        WriteKnownHosts();
        var hosts = string.Join("\n", new[] { "site-a", "site-b" }.Select(h => $"""
            Host {h}
              HostName 127.0.0.1
              Port {Port}
              User {Environment.UserName}
              IdentityFile {Folder}/user_key
              IdentitiesOnly yes
              UserKnownHostsFile {Folder}/known_hosts
              GlobalKnownHostsFile /dev/null

            """));
        File.WriteAllText(ConfigFile, hosts);
        Start();
    }

    /// <summary>Why the SSH tests cannot run here, or null when they can.</summary>
    public static string? SkipReason =>
        Environment.GetEnvironmentVariable("CI") == "true" || File.Exists(Sshd) ? null : "SSH TESTS SKIPPED: no " + Sshd + " (install openssh-server)";

    public string Folder { get; }

    public int Port { get; }

    /// <summary>The client configuration (ssh -F) naming the hosts site-a and site-b.</summary>
    public string ConfigFile => Path.Combine(Folder, "ssh_config");

    /// <summary>Starts sshd and waits until it answers.</summary>
    public void Start()
    {
        if (OperatingSystem.IsLinux() && Environment.UserName == "root")
        {
            Directory.CreateDirectory("/run/sshd"); // sshd's privilege-separation folder
        }

        var start = new ProcessStartInfo(Sshd) { RedirectStandardError = true, RedirectStandardOutput = true };
        foreach (var a in new[] { "-D", "-e", "-f", Path.Combine(Folder, "sshd_config") })
        {
            start.ArgumentList.Add(a);
        }

        _process = Process.Start(start)!;
        _process.BeginErrorReadLine();
        _process.BeginOutputReadLine();
        var deadline = DateTime.UtcNow + TimeSpan.FromSeconds(20);
        while (true)
        {
            try
            {
                using var client = new TcpClient();
                client.Connect(IPAddress.Loopback, Port);
                return;
            }
            catch (SocketException) when (DateTime.UtcNow < deadline && !_process.HasExited)
            {
                Thread.Sleep(100);
            }
        }
    }

    /// <summary>Kills sshd and every connection it serves (the listener and all its descendants).</summary>
    public void Kill()
    {
        if (_process is null)
        {
            return;
        }

        var parents = new Dictionary<int, int>();
        foreach (var dir in Directory.EnumerateDirectories("/proc").Where(d => Path.GetFileName(d).All(char.IsAsciiDigit)))
        {
            try
            {
                var stat = File.ReadAllText(Path.Combine(dir, "stat"));
                var rest = stat[(stat.LastIndexOf(')') + 2)..].Split(' ');
                parents[int.Parse(Path.GetFileName(dir), System.Globalization.CultureInfo.InvariantCulture)] = int.Parse(rest[1], System.Globalization.CultureInfo.InvariantCulture);
            }
            catch (Exception e) when (e is IOException or UnauthorizedAccessException or FormatException)
            {
            }
        }

        var doomed = new HashSet<int> { _process.Id };
        for (var grown = true; grown;)
        {
            grown = false;
            foreach (var (pid, parent) in parents)
            {
                if (doomed.Contains(parent) && doomed.Add(pid))
                {
                    grown = true;
                }
            }
        }

        foreach (var pid in doomed)
        {
            try
            {
                using var p = Process.GetProcessById(pid);
                p.Kill();
            }
            catch (Exception e) when (e is ArgumentException or InvalidOperationException or System.ComponentModel.Win32Exception)
            {
            }
        }

        _process.WaitForExit(5000);
        _process.Dispose();
        _process = null;
    }

    /// <summary>Restarts sshd with a new host key: a client that knows the old one must refuse it.</summary>
    public void ChangeHostKey()
    {
        Kill();
        File.Delete(Path.Combine(Folder, "host_key"));
        File.Delete(Path.Combine(Folder, "host_key.pub"));
        Keygen("host_key");
        Start();
    }

    public void Dispose()
    {
        Kill();
        try
        {
            Directory.Delete(Folder, true);
        }
        catch (IOException)
        {
        }
    }

    private void WriteKnownHosts()
    {
        var key = File.ReadAllText(Path.Combine(Folder, "host_key.pub")).Split(' ');
        File.WriteAllText(Path.Combine(Folder, "known_hosts"), $"[127.0.0.1]:{Port} {key[0]} {key[1]}\n");
    }

    private void Keygen(string name)
    {
        var start = new ProcessStartInfo("ssh-keygen") { RedirectStandardOutput = true, RedirectStandardError = true };
        foreach (var a in new[] { "-q", "-t", "ed25519", "-N", "", "-f", Path.Combine(Folder, name) })
        {
            start.ArgumentList.Add(a);
        }

        using var p = Process.Start(start)!;
        p.WaitForExit();
        Assert.True(p.ExitCode == 0, "ssh-keygen failed: " + p.StandardError.ReadToEnd());
    }

    private static int FreePort()
    {
        var listener = new TcpListener(IPAddress.Loopback, 0);
        listener.Start();
        var port = ((IPEndPoint)listener.LocalEndpoint).Port;
        listener.Stop();
        return port;
    }
}

/// <summary>A test against the tests' own sshd; skipped (with the reason) only outside CI without sshd.</summary>
public sealed class SshFactAttribute : FactAttribute
{
    public SshFactAttribute()
    {
        if (SshServer.SkipReason is { } reason)
        {
            Skip = reason;
        }
    }
}
