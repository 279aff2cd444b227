using System.Diagnostics;
using Campaign.Batch;
using Campaign.Batch.Remote;
using Campaign.Batch.Resilience;
using Campaign.Core.Domain;
using Campaign.Store;
using Campaign.Tracking;
using Campaign.Tracking.Sites;

namespace Campaign.Bench;

/// <summary>
/// The reconcile cycle over many tracked runs on two clusters reached over SSH: run folders on the site through
/// real ssh calls (reading and staging), the batch system in memory (its calls counted: one query per cycle, one
/// call per submission). Counts the SSH calls per cluster per cycle and times the cycles. Needs an sshd and an
/// OpenSSH configuration naming the hosts site-a and site-b (CAMPAIGN_BENCH_SSH_CONFIG), e.g. one like the SSH
/// tests' own (tests/Support/SshServer.cs).
/// </summary>
public static class SshTickBench
{
    /// <summary>Runs the benchmark over <paramref name="runs"/> runs split over the two clusters; prints the figures.</summary>
    public static void Run(int runs)
    {
        if (Environment.GetEnvironmentVariable("CAMPAIGN_BENCH_SSH_CONFIG") is not { Length: > 0 } config)
        {
            Console.WriteLine("  ssh cycle: skipped (set CAMPAIGN_BENCH_SSH_CONFIG to an OpenSSH configuration naming site-a and site-b)");
            return;
        }

        var folder = Directory.CreateTempSubdirectory("cmp-bench-ssh-").FullName;
        var remote = Directory.CreateTempSubdirectory("cmp-bench-remote-").FullName;
        try
        {
            var time = TimeProvider.System;
            var clusters = new[] { "site-a", "site-b" };
            string Profile(string host) => $"""
                name = "{host}"
                batch_system = "slurm"
                cores_per_node = 64
                memory_per_node_gb = 256
                wall_limit_hours = 48
                charge_whole_nodes = false
                max_jobs_queued = 1000000
                max_jobs_running = 1000000
                login_host = "{host}"
                run_root = "{remote}/{host}"
                """;
            var configText = "[campaign]\nname = \"SSH benchmark campaign (invented)\"\nclusters = [\"site-a\", \"site-b\"]\n\n[tracking]\nleg_minutes = 60\n";
            WorkspaceCreator.Create(folder, new WorkspaceTemplate(configText, clusters.ToDictionary(c => c + ".toml", Profile)), force: true, time);
            File.WriteAllText(Path.Combine(folder, "run-leg.sh"), "#!/bin/sh\n");
            using (var workspace = Workspace.Open(folder, time))
            using (var tx = workspace.Connection.BeginTransaction())
            {
                for (var i = 0; i < runs; i++)
                {
                    var configuration = new BinaryConfiguration(MassRatio.From(1 + (i % 9)), Spin.From(0, 0, 0), Spin.From(0, 0, 0), 0.018);
                    var id = $"b{i:D6}.res1";
                    var (run, added) = Campaign.Core.Tracking.TrackedRun.Adopt(id, $"b{i:D6}", 1, clusters[i % 2], 64, Path.Combine("runs", id), 5000, configuration, i, false, time.GetUtcNow());
                    TrackingStore.Add(workspace.Connection, tx, run, added);
                }

                tx.Commit();
            }

            var batches = clusters.ToDictionary(c => c, _ => new TickBench.InMemoryBatch(), StringComparer.Ordinal);
            var shells = clusters.ToDictionary(c => c, c => new SshShell(BatchSystemFactory.SshSettingsFor(folder, c, new RemoteAccess(c, remote + "/" + c, config, false, c), RetryOptions.Default)), StringComparer.Ordinal);
            var links = clusters.ToDictionary(c => c, c => new ClusterLink(batches[c], new RemoteRunSite(shells[c], remote + "/" + c), shells[c]), StringComparer.Ordinal);
            (double Seconds, int Calls) Tick()
            {
                var before = clusters.Sum(c => shells[c].Calls + batches[c].Queries + batches[c].Submissions);
                using var workspace = Workspace.Open(folder, time);
                var watch = Stopwatch.StartNew();
                new Reconciler(workspace, links, time).TickAsync(CancellationToken.None).GetAwaiter().GetResult();
                return (watch.Elapsed.TotalSeconds, clusters.Sum(c => shells[c].Calls + batches[c].Queries + batches[c].Submissions) - before);
            }

            void Report(string what, (double Seconds, int Calls) tick, string calls) =>
                Console.WriteLine(FormattableString.Invariant($"  ssh cycle, {runs} runs on 2 clusters, {what}: {tick.Seconds:F2} s, {tick.Calls} calls in all ({calls})"));

            var first = Tick();
            Report("first (stages and submits every run)", first, "per cluster: 1 reading, 1 staging, one submission per run");
            var started = Tick();
            Report("second (sees them all running)", started, "per cluster: 1 query, 1 reading");
            var steady = Tick();
            Report("steady (nothing changed)", steady, "per cluster: 1 query, 1 reading");
            foreach (var batch in batches.Values)
            {
                batch.EndSome(0.1, new Random(3));
            }

            var turnover = Tick();
            Report("10% of legs ended", turnover, "per cluster: 1 query, 1 reading, 1 staging, one submission per next leg");
        }
        finally
        {
            foreach (var c in new[] { "site-a", "site-b" })
            {
                var control = BatchSystemFactory.SshSettingsFor(folder, c, new RemoteAccess(c, "/", config, false, c), RetryOptions.Default);
                new SshShell(control).CloseOwnMasterAsync(CancellationToken.None).GetAwaiter().GetResult();
            }

            Directory.Delete(folder, recursive: true);
            Directory.Delete(remote, recursive: true);
        }
    }
}
