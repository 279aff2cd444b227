using System.Diagnostics;

namespace Campaign.Batch.Tests.Support;

/// <summary>
/// The real one-node Slurm cluster the Slurm tests run against. Uses SLURM_CONF when it points at a working
/// cluster; otherwise, as root, starts one with .ci/slurm/start-cluster (installing Debian's packages when
/// missing) and stops it when the test process exits. Without root the tests are skipped with the reason;
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

    /// <summary>The adapter for the test cluster.</summary>
    public static Campaign.Batch.Slurm.SlurmBatchSystem Adapter() => new(new Campaign.Batch.Slurm.SlurmOptions { ConfigFile = ConfigFile });

    private static (string?, string?) Start()
    {
        if (Environment.GetEnvironmentVariable("SLURM_CONF") is { Length: > 0 } existing && Works(existing))
        {
            return (existing, null);
        }

        var state = Path.Combine(Path.GetTempPath(), "campaign-slurm-tests");
        var script = Path.Combine(RepositoryRoot.Path, ".ci", "slurm", "start-cluster");
        var (code, output) = Run(script, state);
        if (code != 0)
        {
            return (null, $"{script} exited with {code}: {output}");
        }

        AppDomain.CurrentDomain.ProcessExit += (_, _) => Run(Path.Combine(RepositoryRoot.Path, ".ci", "slurm", "stop-cluster"), state);
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

    private static (int Code, string Output) Run(string file, string argument)
    {
        var start = new ProcessStartInfo(file) { RedirectStandardOutput = true, RedirectStandardError = true };
        start.ArgumentList.Add(argument);
        using var process = Process.Start(start)!;
        var output = process.StandardOutput.ReadToEndAsync();
        var error = process.StandardError.ReadToEndAsync();
        process.WaitForExit();
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
