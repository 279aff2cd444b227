using System.Security.Cryptography;
using Campaign.Batch;
using Campaign.Batch.Processes;
using Campaign.Core.Tracking;
using Campaign.Tracking.Sites;

namespace Campaign.App.Tests;

/// <summary>
/// The remote run-folder reader and stager (POSIX sh programs) run for real by /bin/sh on this host through a local
/// shell, checked against the local reader on the same folders: the two readers are written independently and must
/// agree on every fact the tracker decides from.
/// </summary>
public sealed class RemoteRunSiteTests : IDisposable
{
    private readonly TempFolder _folder = new();
    private readonly TrackingSettings _settings = new() { CheckpointChecksum = true };

    public void Dispose() => _folder.Dispose();

    private string Run(string name, bool done, int points)
    {
        var run = Path.Combine(_folder.Path, "runs", name);
        Directory.CreateDirectory(Path.Combine(run, "checkpoints"));
        File.WriteAllLines(Path.Combine(run, "progress.dat"), Enumerable.Range(0, points).Select(i => $"{i * 10} {1e-6 * (i + 1):E3}"));
        foreach (var (ck, marker, goodSum) in new[] { ("ckpt-000010.json", true, true), ("ckpt-000020.json", true, false), ("ckpt-000030.json", false, true) })
        {
            var path = Path.Combine(run, "checkpoints", ck);
            File.WriteAllText(path, "{\"t\": " + ck[5..11] + "}");
            if (marker)
            {
                File.WriteAllText(path + ".ok", "");
            }

            var sum = Convert.ToHexString(SHA256.HashData(File.ReadAllBytes(path)));
            File.WriteAllText(path + ".sha256", (goodSum ? sum : new string('0', 64)) + "  " + ck + "\n");
        }

        if (done)
        {
            File.WriteAllText(Path.Combine(run, "DONE"), "");
        }

        return run;
    }

    [Fact]
    public async Task The_remote_reader_agrees_with_the_local_reader_on_markers_checkpoints_checksums_and_progress()
    {
        var queries = new[]
        {
            new FolderQuery(Run("a 'quoted' $(touch x)", true, 5), true),
            new FolderQuery(Run("b", false, 2000), false),
            new FolderQuery(Path.Combine(_folder.Path, "runs", "missing"), false),
        };
        var remote = await new RemoteRunSite(new LocalShell(), _folder.Path).InspectAsync(queries, _settings, CancellationToken.None);
        var local = await new LocalRunSite(_folder.Path).InspectAsync(queries, _settings, CancellationToken.None);
        foreach (var query in queries)
        {
            var (r, l) = (remote[query.Path], local[query.Path]);
            Assert.Equal(l.Exists, r.Exists);
            Assert.Equal(l.IsDone, r.IsDone);
            Assert.Equal(l.Checkpoints.Select(c => (c.Path, c.Size, c.HasMarker, c.ChecksumOk, c.Modified.ToUnixTimeSeconds())).OrderBy(c => c.Path),
                r.Checkpoints.Select(c => (c.Path, c.Size, c.HasMarker, c.ChecksumOk, c.Modified.ToUnixTimeSeconds())).OrderBy(c => c.Path));
            // The remote reader brings back the newest reports only (a tail): they are the local reader's last ones.
            Assert.True(r.Progress.Count <= l.Progress.Count);
            Assert.Equal(l.Progress.TakeLast(r.Progress.Count), r.Progress);
            Assert.Equal(l.Progress.LastOrDefault(), r.Progress.LastOrDefault());
        }

        Assert.True(remote[queries[1].Path].Progress.Count is > 20 and < 2000);
        Assert.NotNull(remote[queries[0].Path].OutputGb);
        Assert.Null(remote[queries[1].Path].OutputGb);
        Assert.False(File.Exists(Path.Combine(_folder.Path, "x")));
    }

    [Fact]
    public void A_report_cut_short_by_a_dropped_connection_is_a_transient_failure_not_empty_folders()
    {
        var queries = new[] { new FolderQuery("/r/a", false), new FolderQuery("/r/b", false) };
        var e = Assert.Throws<BatchSystemException>(() => RemoteRunSite.ParseInspection("R 0\nD 0\nR 1\n", queries, _settings));
        Assert.Equal(BatchErrorKind.Transient, e.Kind);
        Assert.Equal(2, RemoteRunSite.ParseInspection("R 0\nD 1\nR 1\nX\nEND 2\n", queries, _settings).Count);
    }

    [Fact]
    public async Task Staging_copies_the_script_and_the_runs_files_checked_by_checksum_and_stages_a_changed_script_again()
    {
        var workspaceRun = Path.Combine(_folder.Path, "ws", "runs", "r1");
        Directory.CreateDirectory(workspaceRun);
        File.WriteAllText(Path.Combine(workspaceRun, "run.json"), "{\"q\": 2}");
        var script = Path.Combine(_folder.Path, "ws", "run-leg.sh");
        File.WriteAllText(script, "#!/bin/sh\necho one\n");
        var site = new RemoteRunSite(new LocalShell(), Path.Combine(_folder.Path, "remote"));
        var target = site.PathOf("runs/r1");
        var prepared = await site.PrepareAsync(new[] { new FolderToPrepare("r1", workspaceRun, target) }, script, CancellationToken.None);
        Assert.Equal(target + "/run-leg.sh", prepared.Scripts["r1"]);
        Assert.Equal("#!/bin/sh\necho one\n", File.ReadAllText(prepared.Scripts["r1"]));
        Assert.True(File.GetUnixFileMode(prepared.Scripts["r1"]).HasFlag(UnixFileMode.UserExecute));
        Assert.Equal("{\"q\": 2}", File.ReadAllText(Path.Combine(target, "run.json")));
        Assert.True(Directory.Exists(Path.Combine(target, "logs")));

        File.WriteAllText(script, "#!/bin/sh\necho two\n");
        await site.PrepareAsync(new[] { new FolderToPrepare("r1", workspaceRun, target) }, script, CancellationToken.None);
        Assert.Equal("#!/bin/sh\necho two\n", File.ReadAllText(prepared.Scripts["r1"]));
    }

    [Fact]
    public async Task A_folder_that_cannot_be_written_fails_the_staging_for_the_site_and_names_the_run()
    {
        // A file where the run folder should be: the folder cannot be made (as for a full disk or no permission,
        // and unlike those, also when the tests run as root).
        var workspaceRun = Path.Combine(_folder.Path, "ws", "runs", "r2");
        Directory.CreateDirectory(workspaceRun);
        var script = Path.Combine(_folder.Path, "ws", "run-leg.sh");
        File.WriteAllText(script, "#!/bin/sh\n");
        var site = new RemoteRunSite(new LocalShell(), Path.Combine(_folder.Path, "remote"));
        Directory.CreateDirectory(Path.Combine(_folder.Path, "remote", "runs"));
        File.WriteAllText(site.PathOf("runs/r2"), "a file in the way");
        var e = await Assert.ThrowsAsync<BatchSystemException>(() => site.PrepareAsync(new[] { new FolderToPrepare("r2", workspaceRun, site.PathOf("runs/r2")) }, script, CancellationToken.None));
        Assert.Equal(BatchErrorKind.Transient, e.Kind);
        Assert.Contains("r2: cannot create", e.Message, StringComparison.Ordinal);
    }
}
