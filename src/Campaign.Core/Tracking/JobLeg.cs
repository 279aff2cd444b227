using Campaign.Core.Lifecycle;

namespace Campaign.Core.Tracking;

/// <summary>
/// One job in a run's chain. Recorded as an intent before the batch system hears of it, submitted once its job id
/// is known, ended (with its charge) when the batch system says it is over. Its state changes only through its
/// methods; the store maps it once.
/// </summary>
public sealed class JobLeg
{
    /// <summary>Creates an intent: a leg about to be submitted.</summary>
    public JobLeg(string runId, int number, string jobName, double worstCase, TimeSpan wall, double startT, string? restartFrom, DateTimeOffset at)
    {
        RunId = runId;
        Number = number;
        JobName = jobName;
        WorstCase = worstCase;
        Wall = wall;
        StartT = startT;
        RestartFrom = restartFrom;
        SubmittedAt = at;
    }

    /// <summary>Store id (set when stored).</summary>
    public long Id { get; set; }

    /// <summary>Its run.</summary>
    public string RunId { get; }

    /// <summary>Its number in the run's chain (1, 2, ...).</summary>
    public int Number { get; }

    /// <summary>The job name given to the batch system (unique).</summary>
    public string JobName { get; }

    /// <summary>The batch system's id, once known.</summary>
    public string? JobId { get; private set; }

    /// <summary>Intent, submitted or ended.</summary>
    public LegPhase Phase { get; private set; } = LegPhase.Intent;

    /// <summary>The normalised job state last seen (a batch-layer name; empty before any).</summary>
    public string JobState { get; private set; } = "";

    /// <summary>The batch system's own state last seen.</summary>
    public string NativeState { get; private set; } = "";

    /// <summary>Exit code, when ended and known.</summary>
    public int? ExitCode { get; private set; }

    /// <summary>Signal that ended it, when known.</summary>
    public int? Signal { get; private set; }

    /// <summary>Wall time it ran, when known.</summary>
    public TimeSpan? Elapsed { get; private set; }

    /// <summary>Charged core-hours, once ended.</summary>
    public double? Charged { get; private set; }

    /// <summary>Charge if it runs its whole wall time (committed while open).</summary>
    public double WorstCase { get; }

    /// <summary>Its wall-time limit.</summary>
    public TimeSpan Wall { get; }

    /// <summary>Simulated time when it was submitted.</summary>
    public double StartT { get; }

    /// <summary>The checkpoint it restarts from ("newest at start" for a pre-queued one), or null for a fresh start.</summary>
    public string? RestartFrom { get; }

    /// <summary>Why the tracker cancelled it ("stall", "bad", "superfluous"), or null.</summary>
    public string? CancelReason { get; private set; }

    /// <summary>When it was submitted (its intent recorded).</summary>
    public DateTimeOffset SubmittedAt { get; }

    /// <summary>When it was first seen running (its queue wait ends there).</summary>
    public DateTimeOffset? StartedAt { get; private set; }

    /// <summary>When it ended.</summary>
    public DateTimeOffset? EndedAt { get; private set; }

    /// <summary>True until it has ended.</summary>
    public bool IsOpen => Phase != LegPhase.Ended;

    /// <summary>A leg as stored (the store's mapping).</summary>
    public static JobLeg Restore(long id, string runId, int number, string jobName, string? jobId, LegPhase phase, string jobState, string nativeState, int? exitCode, int? signal, TimeSpan? elapsed,
        double? charged, double worstCase, TimeSpan wall, double startT, string? restartFrom, string? cancelReason, DateTimeOffset submittedAt, DateTimeOffset? startedAt, DateTimeOffset? endedAt) =>
        new(runId, number, jobName, worstCase, wall, startT, restartFrom, submittedAt)
        {
            Id = id,
            JobId = jobId,
            Phase = phase,
            JobState = jobState,
            NativeState = nativeState,
            ExitCode = exitCode,
            Signal = signal,
            Elapsed = elapsed,
            Charged = charged,
            CancelReason = cancelReason,
            StartedAt = startedAt,
            EndedAt = endedAt,
        };

    /// <summary>The batch system took it: its job id is known.</summary>
    public void Submitted(string jobId, string jobState)
    {
        JobId = jobId;
        Phase = LegPhase.Submitted;
        JobState = jobState;
    }

    /// <summary>What the batch system says while it is alive; returns true when something changed.</summary>
    public bool Observe(string jobState, string nativeState, bool running, DateTimeOffset at)
    {
        var changed = JobState != jobState || NativeState != nativeState || (running && StartedAt is null);
        JobState = jobState;
        NativeState = nativeState;
        if (running)
        {
            StartedAt ??= at;
        }

        return changed;
    }

    /// <summary>It is over: its final state and its charge.</summary>
    public void End(string jobState, string nativeState, int? exitCode, int? signal, TimeSpan? elapsed, double charged, DateTimeOffset at)
    {
        Phase = LegPhase.Ended;
        JobState = jobState;
        NativeState = nativeState;
        ExitCode = exitCode;
        Signal = signal;
        Elapsed = elapsed;
        Charged = charged;
        EndedAt = at;
    }

    /// <summary>The tracker decided to cancel it, for <paramref name="reason"/>.</summary>
    public void CancelFor(string reason) => CancelReason = reason;
}
