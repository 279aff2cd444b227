using Quartz;

namespace Campaign.Tracking;

/// <summary>
/// `campaign watch`: a Quartz scheduler in the foreground with two jobs, a reconcile cycle every N seconds and a
/// daily summary at 08:00. Jobs never overlap; a trigger that misfires (the cluster slept, a cycle ran long)
/// skips ahead to its next time rather than firing a burst. The triggers live in memory: they are rebuilt at
/// every start and hold nothing worth keeping (a persistent trigger store was written at every fire, and on a
/// full disk its write failures stopped the daemon); every fact of the campaign is in campaign.db, written by
/// the cycles, and a cycle after a restart picks up from there. Stops gracefully (the running cycle finishes) when <c>stop</c> is
/// cancelled, or, with <c>untilIdle</c>, when a cycle reports no active run.
/// </summary>
public static class WatchHost
{
    private static Func<CancellationToken, Task<TickReport>>? _tick;
    private static Func<CancellationToken, Task>? _summary;
    private static Action<TickReport>? _after;

    /// <summary>Runs the scheduler until stopped (one watch per process).</summary>
    public static async Task RunAsync(Func<CancellationToken, Task<TickReport>> tick, Func<CancellationToken, Task> summary, TimeSpan interval, bool untilIdle, CancellationToken stop)
    {
        var idle = new TaskCompletionSource(TaskCreationOptions.RunContinuationsAsynchronously);
        _tick = tick;
        _summary = summary;
        _after = report =>
        {
            if (untilIdle && report.Active == 0)
            {
                idle.TrySetResult();
            }
        };

        var scheduler = await QuartzSchedulerBuilder.Create(q =>
        {
            q.UseDefaultThreadPool(1);
            q.UseInMemoryStore();
        }).BuildScheduler(stop).ConfigureAwait(false);

        var reconcile = JobBuilder.Create<ReconcileJob>().WithIdentity("reconcile").StoreDurably().Build();
        var every = TriggerBuilder.Create()
            .WithIdentity("reconcile-every")
            .ForJob(reconcile)
            .StartNow()
            .WithSimpleSchedule(s => s.WithInterval(interval).RepeatForever().WithMisfireInstruction(SimpleTriggerMisfireInstruction.NextWithRemainingCount))
            .Build();
        var daily = JobBuilder.Create<SummaryJob>().WithIdentity("summary").StoreDurably().Build();
        var morning = TriggerBuilder.Create()
            .WithIdentity("summary-daily")
            .ForJob(daily)
            .WithCronSchedule("0 0 8 * * ?", c => c.WithMisfireInstruction(CronTriggerMisfireInstruction.DoNothing))
            .Build();
        var replace = new ScheduleJobOptions { Replace = true };
        await scheduler.ScheduleJob(reconcile, new[] { every }, replace, stop).ConfigureAwait(false);
        await scheduler.ScheduleJob(daily, new[] { morning }, replace, stop).ConfigureAwait(false);
        await scheduler.Start(stop).ConfigureAwait(false);
        try
        {
            await idle.Task.WaitAsync(stop).ConfigureAwait(false);
        }
        catch (OperationCanceledException)
        {
        }
        finally
        {
            await scheduler.Shutdown(true, CancellationToken.None).ConfigureAwait(false);
        }
    }

    /// <summary>One reconcile cycle; never runs twice at once.</summary>
    [DisallowConcurrentExecution]
    public sealed class ReconcileJob : IJob
    {
        /// <inheritdoc />
        public async ValueTask Execute(IJobExecutionContext context, CancellationToken cancellationToken)
        {
            if (_tick is { } tick)
            {
                _after?.Invoke(await tick(cancellationToken).ConfigureAwait(false));
            }
        }
    }

    /// <summary>The daily summary.</summary>
    [DisallowConcurrentExecution]
    public sealed class SummaryJob : IJob
    {
        /// <inheritdoc />
        public async ValueTask Execute(IJobExecutionContext context, CancellationToken cancellationToken)
        {
            if (_summary is { } summary)
            {
                await summary(cancellationToken).ConfigureAwait(false);
            }
        }
    }
}
