using System.Diagnostics;
using Campaign.Batch;
using Campaign.Core.Domain;
using Campaign.Store;
using Campaign.Tracking;

namespace Campaign.Bench;

/// <summary>
/// The reconcile cycle over many tracked runs against an in-process batch backend (no commands, no latency),
/// with the real SQLite workspace: what a cycle costs the tool itself.
/// </summary>
public static class TickBench
{
    /// <summary>An in-memory batch system: jobs run until told to end; counts its calls.</summary>
    internal sealed class InMemoryBatch : IBatchSystem
    {
        private readonly Dictionary<string, (string Name, JobState State)> _jobs = new(StringComparer.Ordinal);
        private long _next;

        public int Queries { get; set; }

        public int Submissions { get; set; }

        public void EndSome(double share, Random random)
        {
            foreach (var id in _jobs.Keys.ToList())
            {
                if (_jobs[id].State == JobState.Working && random.NextDouble() < share)
                {
                    _jobs[id] = (_jobs[id].Name, JobState.OutOfTime);
                }
            }
        }

        public Task<string> SubmitAsync(JobRequest request, CancellationToken cancellationToken)
        {
            Submissions++;
            var id = (++_next).ToString(System.Globalization.CultureInfo.InvariantCulture);
            _jobs[id] = (request.Name, JobState.Working);
            return Task.FromResult(id);
        }

        public Task<IReadOnlyDictionary<string, JobStatus>> QueryAsync(IReadOnlyCollection<string> jobIds, CancellationToken cancellationToken)
        {
            Queries++;
            IReadOnlyDictionary<string, JobStatus> result = jobIds.ToDictionary(id => id, id => _jobs.TryGetValue(id, out var job)
                ? new JobStatus(id, job.State, job.State.ToString(), job.State == JobState.OutOfTime ? 0 : null, null, job.State == JobState.OutOfTime ? TimeSpan.FromHours(1) : null, 1, job.Name)
                : new JobStatus(id, JobState.Vanished, "missing"));
            return Task.FromResult(result);
        }

        public Task CancelAsync(string jobId, CancellationToken cancellationToken) => Task.CompletedTask;

        public Task<string?> FindAsync(string jobName, string workingDirectory, CancellationToken cancellationToken) =>
            Task.FromResult<string?>(_jobs.FirstOrDefault(j => j.Value.Name == jobName).Key);
    }

    private const string Config = """
        [campaign]
        name = "Benchmark campaign (invented)"
        clusters = ["simulated"]

        [tracking]
        leg_minutes = 60
        """;

    private const string Profile = """
        name = "simulated"
        batch_system = "slurm"
        cores_per_node = 64
        memory_per_node_gb = 256
        wall_limit_hours = 48
        charge_whole_nodes = false
        max_jobs_queued = 1000000
        max_jobs_running = 1000000
        """;

    /// <summary>Times the cycles over <paramref name="runs"/> tracked runs: the first (submits all), the one that sees them start, a steady one, and one where 10% of the legs ended.</summary>
    public static (double First, double Started, double Steady, double Turnover, int QueriesPerTick) Measure(int runs)
    {
        var folder = Directory.CreateTempSubdirectory("campaign-bench-tick-").FullName;
        try
        {
            var time = TimeProvider.System;
            WorkspaceCreator.Create(folder, new WorkspaceTemplate(Config, new Dictionary<string, string> { ["simulated.toml"] = Profile }), force: true, time);
            File.WriteAllText(Path.Combine(folder, "run-leg.sh"), "#!/bin/sh\n");
            using (var workspace = Workspace.Open(folder, time))
            using (var tx = workspace.Connection.BeginTransaction())
            {
                var at = time.GetUtcNow();
                for (var i = 0; i < runs; i++)
                {
                    var configuration = new BinaryConfiguration(MassRatio.From(1 + (i % 9)), Spin.From(0, 0, 0), Spin.From(0, 0, 0), 0.018);
                    var (run, added) = Campaign.Core.Tracking.TrackedRun.Adopt($"b{i:D6}.L1", $"b{i:D6}", 1, "simulated", 64, Path.Combine("runs", $"b{i:D6}.L1"), 5000, configuration, i, false, at);
                    TrackingStore.Add(workspace.Connection, tx, run, added);
                }

                tx.Commit();
            }

            var batch = new InMemoryBatch();
            var systems = new Dictionary<string, IBatchSystem> { ["simulated"] = batch };
            double Tick()
            {
                using var workspace = Workspace.Open(folder, time);
                var watch = Stopwatch.StartNew();
                new Reconciler(workspace, systems, time).TickAsync(CancellationToken.None).GetAwaiter().GetResult();
                return watch.Elapsed.TotalSeconds;
            }

            var first = Tick(); // submits every run's first leg
            var started = Tick(); // sees them all running (a state change per run)
            batch.Queries = 0;
            var steady = Tick(); // nothing changed
            var queries = batch.Queries;
            batch.EndSome(0.1, new Random(3));
            var turnover = Tick(); // 10% of the legs ended: recorded, next legs submitted
            return (first, started, steady, turnover, queries);
        }
        finally
        {
            Directory.Delete(folder, recursive: true);
        }
    }
}
