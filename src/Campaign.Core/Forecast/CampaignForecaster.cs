using Campaign.Core.CostModel;
using MathNet.Numerics.Distributions;

namespace Campaign.Core.Forecast;

/// <summary>
/// A seeded Monte Carlo discrete-event simulation of the rest of a campaign. Each replica draws one coefficient
/// vector of the cost model for all runs (shared parameter uncertainty) and a residual per run; each run's
/// remaining wall time is split into legs by its cluster's wall-time limit (less the checkpoint margin);
/// every leg waits in its cluster's queue (a log-normal wait with the profile's median and 90th
/// percentile), within the limits on jobs queued and running; a leg fails with the learned probability,
/// losing its work; a leg is started only within the allocation's period (not before it starts, not after
/// it ends) and while the allocation can still cover its worst case (as the tracker's budget guard does).
/// See docs/forecast.md.
/// </summary>
public static class CampaignForecaster
{
    /// <summary>Runs the forecast from <paramref name="start"/>; <paramref name="progress"/> hears the share of replicas done.</summary>
    public static ForecastResult Run(
        IReadOnlyList<ForecastRun> runs,
        IReadOnlyDictionary<string, ForecastCluster> clusters,
        FittedCostModel? model,
        DateTimeOffset start,
        ForecastOptions options,
        IProgress<double>? progress = null)
    {
        var done = 0;
        var replicas = options.Replicas;
        var n = runs.Count;
        var finish = new double[replicas, n];
        var legs = new double[n];
        var windows = clusters.Values
            .Where(m => m.Allocation is not null)
            .SelectMany(m => WindowsOf(m))
            .ToList();
        var windowCharge = new double[windows.Count, replicas];
        var fits = 0;

        var sampler = model is null ? null : new CoefficientSampler(model);

        var byCluster = Enumerable.Range(0, n).GroupBy(i => runs[i].Cluster).OrderBy(g => g.Key, StringComparer.Ordinal).Select(g => g.ToArray()).ToList();
        var legCounts = new int[replicas, n];

        // Replicas are independent: each has its own generator, seeded from the seed and its index, so the
        // result does not depend on how they are spread over threads.
        Parallel.For(0, replicas, r =>
        {
            var random = new Random(unchecked(options.Seed * 1_000_003 + r));
            var remaining = new double[n];
            var b = sampler?.Draw(random);

            for (var i = 0; i < n; i++)
            {
                var run = runs[i];
                double coreHours;
                if (run.FeatureRow is { } x && b is not null)
                {
                    var y = run.LogOffset;
                    for (var j = 0; j < x.Length; j++)
                    {
                        y += x[j] * b[j];
                    }

                    coreHours = Math.Exp(y + Normal.Sample(random, 0, model!.ResidualSd));
                }
                else
                {
                    coreHours = run.GivenCoreHours ?? 0;
                }

                remaining[i] = coreHours / run.Cores * (1 - run.DoneFraction);
            }

            var allFit = true;
            foreach (var group in byCluster)
            {
                var cluster = clusters[runs[group[0]].Cluster];
                allFit &= SimulateCluster(group, runs, cluster, remaining, start, options, random, r, finish, legCounts, windows, windowCharge);
            }

            if (allFit)
            {
                Interlocked.Increment(ref fits);
            }

            var finished = Interlocked.Increment(ref done);
            if (progress is not null && finished % Math.Max(1, replicas / 100) == 0)
            {
                progress.Report((double)finished / replicas);
            }
        });

        for (var i = 0; i < n; i++)
        {
            for (var r = 0; r < replicas; r++)
            {
                legs[i] += legCounts[r, i];
            }
        }

        var runForecasts = new List<RunForecast>();
        var campaignFinish = new double[replicas];
        for (var r = 0; r < replicas; r++)
        {
            var last = 0.0;
            for (var i = 0; i < n; i++)
            {
                last = Math.Max(last, finish[r, i]);
            }

            campaignFinish[r] = last;
        }

        for (var i = 0; i < n; i++)
        {
            var times = new double[replicas];
            for (var r = 0; r < replicas; r++)
            {
                times[r] = finish[r, i];
            }

            var cluster = clusters[runs[i].Cluster];
            var end = cluster.Allocation is { } a ? Hours(start, a.End.ToDateTime(TimeOnly.MaxValue, DateTimeKind.Utc)) : double.PositiveInfinity;
            var late = times.Count(t => t > end) / (double)replicas;
            runForecasts.Add(new RunForecast(runs[i].Id, runs[i].Cluster, Quantiles(times, start), late, legs[i] / replicas));
        }

        var windowForecasts = windows.Select((w, k) =>
        {
            var charges = Enumerable.Range(0, replicas).Select(r => windowCharge[k, r]).Order().ToArray();
            return new WindowForecast(w.Cluster, w.Start, w.End, w.Amount, charges.Average(), Quantile(charges, 0.1), Quantile(charges, 0.9),
                charges.Count(c => c > w.Amount) / (double)replicas, charges.Count(c => c < 0.9 * w.Amount) / (double)replicas);
        }).ToList();
        return new ForecastResult(start, replicas, Quantiles(campaignFinish, start), fits / (double)replicas, runForecasts, windowForecasts);
    }

    private sealed record Window(string Cluster, DateOnly Start, DateOnly End, double Amount, double StartHour, double EndHour);

    private static IEnumerable<Window> WindowsOf(ForecastCluster cluster)
    {
        var a = cluster.Allocation!;
        var factor = a.Unit == Domain.AllocationUnit.CoreHours ? 1 : cluster.Profile.CoresPerNode;
        if (a.Windows.Count == 0)
        {
            yield return new Window(cluster.Profile.Name, a.Start, a.End, a.Amount * factor, 0, 0);
            yield break;
        }

        foreach (var w in a.Windows)
        {
            yield return new Window(cluster.Profile.Name, w.Start, w.End, w.Amount * factor, 0, 0);
        }
    }

    /// <summary>One cluster in one replica; returns true when every run on it finished within its allocation.</summary>
    private static bool SimulateCluster(int[] runIndices, IReadOnlyList<ForecastRun> runs, ForecastCluster cluster, double[] remaining, DateTimeOffset start,
        ForecastOptions options, Random random, int replica, double[,] finish, int[,] legCount, IReadOnlyList<Window> windows, double[,] windowCharge)
    {
        var profile = cluster.Profile;
        var usable = Math.Max(profile.WallLimitHours - options.CheckpointMarginHours, profile.WallLimitHours / 2);
        var allocation = cluster.Allocation;
        var budget = allocation is null ? double.PositiveInfinity : allocation.CoreHours(profile) - cluster.AlreadyCharged;
        var allocationEnd = allocation is null ? double.PositiveInfinity : Hours(start, allocation.End.ToDateTime(TimeOnly.MaxValue, DateTimeKind.Utc));
        var allocationStart = allocation is null ? 0 : Math.Max(0, Hours(start, allocation.Start.ToDateTime(TimeOnly.MinValue, DateTimeKind.Utc)));
        var myWindows = Enumerable.Range(0, windows.Count).Where(k => windows[k].Cluster == profile.Name).ToArray();
        var windowHours = myWindows.Select(k => (Start: Hours(start, windows[k].Start.ToDateTime(TimeOnly.MinValue, DateTimeKind.Utc)), End: Hours(start, windows[k].End.ToDateTime(TimeOnly.MaxValue, DateTimeKind.Utc)))).ToArray();
        var (waitMedian, waitP90, _) = cluster.QueueWait();
        var sigma = waitMedian > 0 && waitP90 > waitMedian ? Math.Log(waitP90 / waitMedian) / 1.2815515655446004 : 0;
        double Wait() => waitMedian <= 0 ? 0 : waitMedian * Math.Exp(sigma * Normal.Sample(random, 0, 1));

        var backlog = new Queue<int>();
        var firstLeg = new HashSet<int>();
        foreach (var i in runIndices)
        {
            finish[replica, i] = remaining[i] <= 0 ? 0 : double.PositiveInfinity;
            if (remaining[i] > 0)
            {
                backlog.Enqueue(i);
                firstLeg.Add(i);
            }
        }

        var eligible = new PriorityQueue<int, double>();
        var running = new PriorityQueue<(int Run, double Length, bool Failed, double Started), double>();
        var submitted = 0;
        var free = profile.MaxJobsRunning;
        var charged = 0.0;
        var committed = 0.0; // worst cases of the running legs, as the tracker's budget guard counts them
        var now = 0.0;
        var allFinished = true;

        void Submit()
        {
            while (backlog.Count > 0 && submitted < profile.MaxJobsQueued)
            {
                var i = backlog.Dequeue();
                submitted++;
                var wait = firstLeg.Remove(i) && runs[i].Active ? 0 : Wait();
                eligible.Enqueue(i, now + wait);
            }
        }

        Submit();
        while (eligible.Count > 0 || running.Count > 0)
        {
            var nextStart = free > 0 && eligible.TryPeek(out _, out var eligibleAt) ? Math.Max(Math.Max(now, eligibleAt), allocationStart) : double.PositiveInfinity;
            var nextEnd = running.TryPeek(out _, out var endAt) ? endAt : double.PositiveInfinity;
            if (nextStart <= nextEnd)
            {
                var i = eligible.Dequeue();
                now = nextStart;
                var run = runs[i];
                var perHour = profile.ChargedCoreHours(run.Cores, 1);
                var length = Math.Min(remaining[i], usable);
                var worst = perHour * profile.WallLimitHours;
                if (now > allocationEnd || charged + committed + worst > budget)
                {
                    submitted--; // the budget guard holds it back for good: it will not finish within this allocation
                    allFinished = false;
                    Submit();
                    continue;
                }

                if (myWindows.Length > 0 && allocation is not null && allocation.Windows.Count > 0)
                {
                    // Use-it-or-lose-it windows: like the tracker's guard, a leg starts only while the window it
                    // starts in has room for its worst case (charges counted in the window where legs end).
                    var k = Array.FindIndex(windowHours, w => w.Start <= now && now <= w.End);
                    if (k < 0 || windowCharge[myWindows[k], replica] + committed + worst > windows[myWindows[k]].Amount)
                    {
                        var nextWindow = windowHours.Select(w => w.Start).Where(s => s > now).DefaultIfEmpty(double.PositiveInfinity).Min();
                        var retry = running.TryPeek(out _, out var ends) && k >= 0 ? Math.Min(ends + 1e-9, nextWindow) : nextWindow;
                        if (double.IsPositiveInfinity(retry))
                        {
                            submitted--; // no later window: held back for good
                            allFinished = false;
                            Submit();
                            continue;
                        }

                        // Waits for room; submitted again (with a fresh queue wait) when a new window opens.
                        eligible.Enqueue(i, retry == nextWindow ? retry + Wait() : retry);
                        continue;
                    }
                }

                var failed = random.NextDouble() < options.LegFailureProbability;
                var elapsed = failed ? length * random.NextDouble() : length;
                free--;
                committed += worst;
                legCount[replica, i]++;
                running.Enqueue((i, length, failed, now), now + elapsed);
            }
            else
            {
                var (i, length, failed, started) = running.Dequeue();
                var elapsed = nextEnd - started;
                now = nextEnd;
                free++;
                submitted--;
                var run = runs[i];
                var charge = profile.ChargedCoreHours(run.Cores, elapsed);
                charged += charge;
                committed -= profile.ChargedCoreHours(run.Cores, 1) * profile.WallLimitHours;
                for (var k = 0; k < myWindows.Length; k++)
                {
                    if (windowHours[k].Start <= now && now <= windowHours[k].End)
                    {
                        windowCharge[myWindows[k], replica] += charge;
                        break;
                    }
                }

                if (!failed)
                {
                    remaining[i] -= length;
                }

                if (remaining[i] <= 1e-9)
                {
                    finish[replica, i] = now;
                    if (now > allocationEnd)
                    {
                        allFinished = false;
                    }
                }
                else
                {
                    backlog.Enqueue(i);
                }

                Submit();
            }
        }

        if (allocation is not null && myWindows.Length == 1 && allocation.Windows.Count == 0)
        {
            windowCharge[myWindows[0], replica] += cluster.AlreadyCharged;
        }

        return allFinished && runIndices.All(i => !double.IsPositiveInfinity(finish[replica, i]));
    }

    private static double Hours(DateTimeOffset start, DateTime moment) => (new DateTimeOffset(moment, TimeSpan.Zero) - start).TotalHours;

    private static DateQuantiles Quantiles(double[] hours, DateTimeOffset start)
    {
        var sorted = hours.Order().ToArray();
        DateTimeOffset? At(double p)
        {
            var h = Quantile(sorted, p);
            return double.IsPositiveInfinity(h) ? null : start + TimeSpan.FromHours(h);
        }

        return new DateQuantiles(At(0.1), At(0.5), At(0.9));
    }

    private static double Quantile(double[] sorted, double p)
    {
        if (sorted.Length == 0)
        {
            return 0;
        }

        var index = (int)Math.Min(sorted.Length - 1, Math.Floor(p * sorted.Length));
        return sorted[index];
    }
}
