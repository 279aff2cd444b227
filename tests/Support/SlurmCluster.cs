using System.Diagnostics;

namespace Campaign.Testing;

/// <summary>
/// The real one-node Slurm cluster the Slurm tests run against. Uses SLURM_CONF when it points at a working
/// cluster; otherwise, as root, starts one with .ci/slurm/start-cluster (installing Debian's packages when
/// missing) and stops it when the last test process using it exits (test assemblies run in parallel processes
/// and share one cluster). Without root the tests are skipped with the reason;
/// under CI (CI=true) they are never skipped, so a cluster that cannot start fails them.
/// </summary>
public static class SlurmCluster
{
    private static readonly Lazy<(string? ConfigFile, string? Problem)> Started = new(Start);

    /// <summary>Why the Slurm tests cannot run here, or null when they can.</summary>
    public static string? SkipReason
    {
        get
        {
            if (Environment.GetEnvironmentVariable("CI") == "true")
            {
                return null;
            }

            if (Environment.GetEnvironmentVariable("SLURM_CONF") is { Length: > 0 })
            {
                return null;
            }

            return Environment.UserName == "root" ? null : "SLURM TESTS SKIPPED: no SLURM_CONF and not root, so no test cluster can be started (run as root, or point SLURM_CONF at a test cluster)";
        }
    }

    /// <summary>slurm.conf of the running test cluster; fails the test when none could be started.</summary>
    public static string ConfigFile
    {
        get
        {
            var (config, problem) = Started.Value;
            Assert.True(config is not null, "the test Slurm cluster could not be started: " + problem);
            return config!;
        }
    }

    /// <summary>
    /// Holds the cluster for one test: shared by ordinary tests (in any test process), exclusive for a test that
    /// restarts the controller or takes the node down. Waits (up to 10 minutes) for a conflicting holder.
    /// </summary>
    public static IDisposable Use(bool exclusive = false)
    {
        var path = Path.Combine(Path.GetDirectoryName(ConfigFile)!, "tests.lock");
        var deadline = DateTime.UtcNow + TimeSpan.FromMinutes(10);
        while (true)
        {
            try
            {
                // On Linux .NET takes flock(LOCK_EX) for FileShare.None and flock(LOCK_SH) otherwise, across processes.
                return new FileStream(path, FileMode.OpenOrCreate, FileAccess.ReadWrite, exclusive ? FileShare.None : FileShare.ReadWrite);
            }
            catch (IOException) when (DateTime.UtcNow < deadline)
            {
                Thread.Sleep(500);
            }
        }
    }

    private static (string?, string?) Start()
    {
        if (Environment.GetEnvironmentVariable("SLURM_CONF") is { Length: > 0 } existing && Works(existing))
        {
            return (existing, null);
        }

        var state = Path.Combine(Path.GetTempPath(), "campaign-slurm-tests");
        var script = Path.Combine(RepositoryRoot.Path, ".ci", "slurm", "start-cluster");
        var me = Environment.ProcessId.ToString(System.Globalization.CultureInfo.InvariantCulture);
        var (code, output) = Run(script, new[] { state }, me);
        if (code != 0)
        {
            return (null, $"{script} exited with {code}: {output}");
        }

        AppDomain.CurrentDomain.ProcessExit += (_, _) => Run(Path.Combine(RepositoryRoot.Path, ".ci", "slurm", "stop-cluster"), new[] { state, "--user", me }, me);
        var config = Path.Combine(state, "slurm.conf");
        return Works(config) ? (config, null) : (null, "the cluster started but sinfo does not answer");
    }

    private static bool Works(string config)
    {
        var start = new ProcessStartInfo("sinfo") { RedirectStandardOutput = true, RedirectStandardError = true };
        start.ArgumentList.Add("--noheader");
        start.Environment["SLURM_CONF"] = config;
        try
        {
            using var process = Process.Start(start)!;
            process.WaitForExit(20_000);
            return process.HasExited && process.ExitCode == 0;
        }
        catch (System.ComponentModel.Win32Exception)
        {
            return false;
        }
    }

    private static (int Code, string Output) Run(string file, string[] arguments, string user)
    {
        var start = new ProcessStartInfo(file) { RedirectStandardOutput = true, RedirectStandardError = true };
        foreach (var argument in arguments)
        {
            start.ArgumentList.Add(argument);
        }

        start.Environment["CAMPAIGN_SLURM_USER"] = user;
        using var process = Process.Start(start)!;
        var output = process.StandardOutput.ReadToEndAsync();
        var error = process.StandardError.ReadToEndAsync();
        if (!process.WaitForExit(180_000))
        {
            process.Kill(entireProcessTree: true);
            return (124, "timed out after 180 s");
        }

        return (process.ExitCode, output.Result + error.Result);
    }
}

/// <summary>A test against the real Slurm cluster; skipped (with the reason) only outside CI and without root.</summary>
public sealed class SlurmFactAttribute : FactAttribute
{
    public SlurmFactAttribute()
    {
        if (SlurmCluster.SkipReason is { } reason)
        {
            Skip = reason;
        }
    }
}
