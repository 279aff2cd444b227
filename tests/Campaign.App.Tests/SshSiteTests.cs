using Campaign.Batch;
using Campaign.Batch.Remote;
using Campaign.Core.Tracking;
using Campaign.Tracking.Sites;

namespace Campaign.App.Tests;

/// <summary>
/// A remote site reached through the system OpenSSH client and a real sshd of the tests' own on loopback: quoting
/// through the remote login shell, the workstation runner and the run-folder reader over ssh, a changed host key
/// refused, and a site that needs a master connection without one.
/// </summary>
public sealed class SshSiteTests : IDisposable
{
    private readonly SshServer? _server;
    private readonly TempFolder _folder = new();

    public SshSiteTests()
    {
        if (SshServer.SkipReason is null)
        {
            _server = new SshServer();
        }
    }

    public void Dispose()
    {
        if (_server is not null)
        {
            foreach (var shell in _shells)
            {
                shell.CloseOwnMasterAsync(CancellationToken.None).GetAwaiter().GetResult();
            }

            _server.Dispose();
        }

        _folder.Dispose();
    }

    private readonly List<SshShell> _shells = new();

    private SshShell Shell(string host = "site-a", bool requiresMaster = false)
    {
        var shell = new SshShell(new SshSettings(host, _server!.ConfigFile, Path.Combine(_server.Folder, "cm-" + host + (requiresMaster ? "-m" : "")), requiresMaster, TimeSpan.FromSeconds(10)));
        _shells.Add(shell);
        return shell;
    }

    private static readonly string[] Hostile =
    {
        "plain", "with space", "it's", "\"double\"", "$(touch PWNED)", "`touch PWNED`", "a;touch PWNED", "a && touch PWNED", "a | cat", "*", "~", "$HOME", "line\nbreak", "-n", "", "\\", "!", "#comment",
    };

    [SshFact]
    public async Task Every_word_reaches_the_remote_program_as_it_was_and_nothing_in_it_runs()
    {
        var shell = Shell();
        var result = await shell.RunAsync("sh", new[] { "-c", "for w in \"$@\"; do printf '<%s>' \"$w\"; done", "sh" }.Concat(Hostile).ToList(), CancellationToken.None, workingDirectory: _folder.Path);
        Assert.Equal(0, result.ExitCode);
        Assert.Equal(string.Concat(Hostile.Select(w => "<" + w + ">")), result.StandardOutput);
        Assert.False(File.Exists(Path.Combine(_folder.Path, "PWNED")));
        Assert.Equal(1, shell.Calls);
    }

    [SshFact]
    public async Task The_workstation_runner_runs_a_leg_with_a_hostile_id_and_path_over_ssh()
    {
        var folder = Path.Combine(_folder.Path, "run $(touch PWNED) 'x'");
        Directory.CreateDirectory(folder);
        var script = Path.Combine(folder, "leg.sh");
        File.WriteAllText(script, "#!/bin/sh\necho \"restart=$CAMPAIGN_RESTART\"\n");
        File.SetUnixFileMode(script, UnixFileMode.UserRead | UnixFileMode.UserWrite | UnixFileMode.UserExecute);
        var runner = new WorkstationBatchSystem(Shell(), Path.Combine(_folder.Path, "runner"), 2);
        var request = new JobRequest(JobName.For("t0", "a.res1", 1), script, folder, 1, TimeSpan.FromMinutes(1), folder + "/out", folder + "/err",
            new Dictionary<string, string> { ["CAMPAIGN_RESTART"] = "/ck/$(touch PWNED)/`id`" });
        var id = await runner.SubmitAsync(request, CancellationToken.None);
        var deadline = DateTime.UtcNow.AddSeconds(30);
        JobStatus status;
        do
        {
            await Task.Delay(300);
            status = (await runner.QueryAsync(new[] { id }, CancellationToken.None))[id];
        }
        while (!status.State.IsFinal() && DateTime.UtcNow < deadline);
        Assert.Equal(JobState.Succeeded, status.State);
        Assert.Equal("restart=/ck/$(touch PWNED)/`id`\n", File.ReadAllText(folder + "/out"));
        Assert.Equal(id, await runner.FindAsync(request.Name, folder, CancellationToken.None));
        Assert.Empty(Directory.EnumerateFiles(_folder.Path, "PWNED", SearchOption.AllDirectories));
    }

    [SshFact]
    public async Task Run_folders_read_over_ssh_agree_with_the_local_reader()
    {
        var run = Path.Combine(_folder.Path, "runs", "r1");
        Directory.CreateDirectory(Path.Combine(run, "checkpoints"));
        File.WriteAllText(Path.Combine(run, "progress.dat"), "0 1e-6\n10 2e-6\n");
        File.WriteAllText(Path.Combine(run, "checkpoints", "ckpt-000010.json"), "{}");
        File.WriteAllText(Path.Combine(run, "checkpoints", "ckpt-000010.json.ok"), "");
        var settings = new TrackingSettings();
        var queries = new[] { new FolderQuery(run, true) };
        var remote = (await new RemoteRunSite(Shell(), _folder.Path).InspectAsync(queries, settings, CancellationToken.None))[run];
        var local = (await new LocalRunSite(_folder.Path).InspectAsync(queries, settings, CancellationToken.None))[run];
        Assert.Equal(local.Progress, remote.Progress);
        Assert.Equal(local.Checkpoints.Select(c => (c.Path, c.Size, c.HasMarker)), remote.Checkpoints.Select(c => (c.Path, c.Size, c.HasMarker)));
    }

    [SshFact]
    public async Task A_changed_host_key_is_refused_and_nothing_runs()
    {
        var shell = Shell("site-b");
        Assert.Equal(0, (await shell.RunAsync("true", Array.Empty<string>(), CancellationToken.None)).ExitCode);
        await shell.CloseOwnMasterAsync(CancellationToken.None);
        _server!.ChangeHostKey();
        var marker = Path.Combine(_folder.Path, "ran");
        var e = await Assert.ThrowsAsync<BatchSystemException>(() => shell.RunAsync("touch", new[] { marker }, CancellationToken.None));
        Assert.Equal(BatchErrorKind.Permanent, e.Kind);
        Assert.Contains("host key refused", e.Message, StringComparison.Ordinal);
        Assert.False(File.Exists(marker));
    }

    [SshFact]
    public async Task A_site_that_needs_a_master_connection_says_which_command_opens_it_and_works_once_it_is_open()
    {
        var shell = Shell(requiresMaster: true);
        var marker = Path.Combine(_folder.Path, "ran");
        var e = await Assert.ThrowsAsync<BatchSystemException>(() => shell.RunAsync("touch", new[] { marker }, CancellationToken.None));
        Assert.Equal(BatchErrorKind.Permanent, e.Kind);
        Assert.Contains("no master connection", e.Message, StringComparison.Ordinal);
        Assert.Contains("open it with: " + shell.MasterCommand, e.Message, StringComparison.Ordinal);
        Assert.False(File.Exists(marker));

        // The user runs the command the message gives (here without a terminal: the test sshd takes the key).
        var words = shell.MasterCommand.Split(' ');
        var open = System.Diagnostics.Process.Start("ssh", new[] { "-o", "BatchMode=yes" }.Concat(words.Skip(1)))!;
        await open.WaitForExitAsync();
        Assert.Equal(0, open.ExitCode);
        try
        {
            Assert.True(await shell.MasterIsOpenAsync(CancellationToken.None));
            Assert.Equal(0, (await shell.RunAsync("touch", new[] { marker }, CancellationToken.None)).ExitCode);
            Assert.True(File.Exists(marker));
        }
        finally
        {
            using var close = System.Diagnostics.Process.Start("ssh", new[] { "-F", _server!.ConfigFile, "-o", "ControlPath=" + shell.Settings.ControlPath, "-O", "exit", "site-a" })!;
            await close.WaitForExitAsync();
        }
    }
}
