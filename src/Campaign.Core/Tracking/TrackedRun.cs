using Campaign.Core.Domain;
using Campaign.Core.Lifecycle;

namespace Campaign.Core.Tracking;

/// <summary>A change a run went through (or a note on it when the state stays), with why: what the event log keeps and notifications send.</summary>
/// <param name="RunId">The run.</param>
/// <param name="From">State before; null for the run's first event.</param>
/// <param name="To">State after.</param>
/// <param name="Why">What happened.</param>
/// <param name="At">When.</param>
public sealed record RunTransition(string RunId, RunState? From, RunState To, string Why, DateTimeOffset At)
{
    /// <summary>True when the state changed (a note keeps it).</summary>
    public bool Changed => From != To;
}

/// <summary>
/// A tracked run: one configuration at one level (or a rehearsal of it), evolved by a chain of job legs. Its
/// state and counters change only through its methods; each returns the transition it causes, which the caller
/// stores in the same transaction as the run.
/// </summary>
public sealed class TrackedRun
{
    private TrackedRun(string runId, string configId, int level, string cluster, int cores, string folder, double targetLength, BinaryConfiguration configuration, long position, bool rehearsal, DateTimeOffset createdAt)
    {
        RunId = runId;
        ConfigId = configId;
        Level = level;
        Cluster = cluster;
        Cores = cores;
        Folder = folder;
        TargetLength = targetLength;
        Configuration = configuration;
        Position = position;
        Rehearsal = rehearsal;
        CreatedAt = createdAt;
        UpdatedAt = createdAt;
    }

    /// <summary>Run id.</summary>
    public string RunId { get; }

    /// <summary>Configuration id.</summary>
    public string ConfigId { get; }

    /// <summary>Resolution level.</summary>
    public int Level { get; }

    /// <summary>Cluster it runs on.</summary>
    public string Cluster { get; }

    /// <summary>Cores per job.</summary>
    public int Cores { get; }

    /// <summary>Its folder, relative to the workspace.</summary>
    public string Folder { get; }

    /// <summary>Simulated length (M) it must reach.</summary>
    public double TargetLength { get; }

    /// <summary>The binary's physics.</summary>
    public BinaryConfiguration Configuration { get; }

    /// <summary>Order in which runs get their legs.</summary>
    public long Position { get; }

    /// <summary>A rehearsal: its own kind of run (never a plan run done, never a run log).</summary>
    public bool Rehearsal { get; }

    /// <summary>When it was added.</summary>
    public DateTimeOffset CreatedAt { get; }

    /// <summary>Its state.</summary>
    public RunState State { get; private set; } = RunState.Planned;

    /// <summary>Why it is held, waiting or failed (empty otherwise).</summary>
    public string Reason { get; private set; } = "";

    /// <summary>Failed legs in a row that still made progress.</summary>
    public int FailuresWithProgress { get; private set; }

    /// <summary>Failed legs in a row without progress.</summary>
    public int FailuresWithoutProgress { get; private set; }

    /// <summary>Restarts after a stall (at most one before a hold).</summary>
    public int StallRestarts { get; private set; }

    /// <summary>Legs in a row that the warning ended before any progress.</summary>
    public int ShortLegs { get; private set; }

    /// <summary>Simulated time reached (M).</summary>
    public double Progress { get; private set; }

    /// <summary>When progress last moved (or its leg started running): the stall clock.</summary>
    public DateTimeOffset? ProgressAt { get; private set; }

    /// <summary>The latest constraint norm reported.</summary>
    public double? Norm { get; private set; }

    /// <summary>The latest checkpoint used.</summary>
    public string? Checkpoint { get; private set; }

    /// <summary>When it last changed.</summary>
    public DateTimeOffset UpdatedAt { get; private set; }

    /// <summary>When it finished.</summary>
    public DateTimeOffset? FinishedAt { get; private set; }

    /// <summary>A new run, planned, with its first transition.</summary>
    public static (TrackedRun Run, RunTransition Added) Adopt(string runId, string configId, int level, string cluster, int cores, string folder, double targetLength, BinaryConfiguration configuration, long position, bool rehearsal, DateTimeOffset at)
    {
        var run = new TrackedRun(runId, configId, level, cluster, cores, folder, targetLength, configuration, position, rehearsal, at);
        return (run, new RunTransition(runId, null, RunState.Planned, "added from the plan", at));
    }

    /// <summary>A run as stored (the store's mapping; no transition).</summary>
    public static TrackedRun Restore(
        string runId, string configId, int level, string cluster, int cores, string folder, double targetLength, BinaryConfiguration configuration, long position, bool rehearsal, DateTimeOffset createdAt,
        RunState state, string reason, int failuresWithProgress, int failuresWithoutProgress, int stallRestarts, int shortLegs, double progress, DateTimeOffset? progressAt, double? norm, string? checkpoint,
        DateTimeOffset updatedAt, DateTimeOffset? finishedAt) =>
        new(runId, configId, level, cluster, cores, folder, targetLength, configuration, position, rehearsal, createdAt)
        {
            State = state,
            Reason = reason,
            FailuresWithProgress = failuresWithProgress,
            FailuresWithoutProgress = failuresWithoutProgress,
            StallRestarts = stallRestarts,
            ShortLegs = shortLegs,
            Progress = progress,
            ProgressAt = progressAt,
            Norm = norm,
            Checkpoint = checkpoint,
            UpdatedAt = updatedAt,
            FinishedAt = finishedAt,
        };

    /// <summary>Share of the target length done, in [0, 1].</summary>
    public double DoneFraction => TargetLength > 0 ? Math.Clamp(Progress / TargetLength, 0, 1) : 0;

    /// <summary>The read-only view the rest of the campaign uses.</summary>
    public RunRecord ToRecord() => new(RunId, ConfigId, Level, Cluster, Cores, Configuration, TargetLength, State, Reason, Rehearsal, Progress, FinishedAt);

    /// <summary>A leg was submitted for it (a pre-queued one keeps the state): queued.</summary>
    public RunTransition Submitting(string why, bool prequeued, DateTimeOffset at) =>
        prequeued ? Note(why, at) : Move(RunState.Queued, "", why, at);

    /// <summary>What the batch system says of its open leg while the leg is alive.</summary>
    /// <param name="running">True when the leg runs (its queue wait is over).</param>
    /// <param name="startedNow">True when it was not seen running before: the stall clock starts.</param>
    /// <param name="why">What was seen.</param>
    /// <param name="at">Now.</param>
    public RunTransition? Observe(bool running, bool startedNow, string why, DateTimeOffset at)
    {
        if (!State.IsActive())
        {
            return null;
        }

        if (running && startedNow)
        {
            ProgressAt = at;
        }

        return Move(running ? RunState.Running : RunState.Queued, "", why, at);
    }

    /// <summary>Waits for the budget, with the reason (null when it already waits for that reason).</summary>
    public RunTransition? WaitForBudget(string why, DateTimeOffset at) =>
        State == RunState.WaitingBudget && Reason == why ? null : Move(RunState.WaitingBudget, why, why, at);

    /// <summary>Held for a human, with the reason; <paramref name="detail"/> goes to the event when it says more.</summary>
    public RunTransition Hold(string reason, DateTimeOffset at, string? detail = null) => Move(RunState.Held, reason, detail ?? reason, at);

    /// <summary>Released by a human: needs its next leg again, with its counters reset.</summary>
    public RunTransition Release(DateTimeOffset at)
    {
        if (State != RunState.Held)
        {
            throw new InvalidOperationException($"{RunId} is {State.Name()}, not held");
        }

        ResetCounters();
        return Move(RunState.Planned, "", "released by a human", at);
    }

    /// <summary>Given up by a human (or withdrawn by a re-plan, with that reason).</summary>
    public RunTransition Abandon(DateTimeOffset at, string why = "abandoned by a human")
    {
        ResetCounters();
        return Move(RunState.Failed, why, why, at);
    }

    /// <summary>Puts the run back as it was before a submission that never reached a broken cluster.</summary>
    public RunTransition Restore(RunState state, string reason, string why, DateTimeOffset at) => Move(state, reason, why, at);

    /// <summary>
    /// An unconfirmed submission was found in the batch system (queued) or never reached it (planned). A run that
    /// has finished or was given up stays so: resolving an intent never brings it back.
    /// </summary>
    public RunTransition IntentResolved(bool found, string why, DateTimeOffset at) =>
        State is RunState.Finished or RunState.Failed ? Note(why, at) : Move(found ? RunState.Queued : RunState.Planned, Reason, why, at);

    /// <summary>New progress read from its folder.</summary>
    public void NoteProgress(double t, double? norm, DateTimeOffset at)
    {
        if (t > Progress)
        {
            Progress = t;
            Norm = norm;
            ProgressAt = at;
            UpdatedAt = at;
        }
    }

    /// <summary>No progress for too long: cancelled to restart once (a note: the state stays).</summary>
    public RunTransition StalledOnce(string stalled, int leg, DateTimeOffset at)
    {
        StallRestarts = 1;
        Reason = stalled + ": cancelled to restart once";
        return Note(stalled + "; cancelling leg " + leg.ToString(System.Globalization.CultureInfo.InvariantCulture) + " to restart once", at);
    }

    /// <summary>
    /// One of its legs ended: decides finish, continue or hold by the restart rules, with the progress read
    /// from its folder; a leg the warning signal ended before any progress is too short, not a failure.
    /// </summary>
    /// <param name="ending">How the leg ended ("succeeded", "out_of_time", "crashed", "too_short" ...).</param>
    /// <param name="startT">Simulated time when the leg was submitted.</param>
    /// <param name="latest">Simulated time reached now.</param>
    /// <param name="doneMarker">True when the run's done marker exists.</param>
    /// <param name="othersOpen">True when another leg of it is still open (pre-queued).</param>
    /// <param name="describe">What ended, for the event ("leg 3 (job 42) ended TIMEOUT").</param>
    /// <param name="settings">The restart rules' limits.</param>
    /// <param name="at">Now.</param>
    /// <param name="goneBad">Why its output shows it has gone bad (held, never finished), or null.</param>
    public (NextStep Step, RunTransition Transition) EndLeg(string ending, double startT, double latest, bool doneMarker, bool othersOpen, string describe, TrackingSettings settings, DateTimeOffset at, string? goneBad = null)
    {
        Progress = Math.Max(Progress, latest);
        if (!State.IsActive())
        {
            return (NextStep.Continue, Note(describe, at));
        }

        var end = new LegEnd(ending, startT, Progress, TargetLength, doneMarker, FailuresWithProgress, FailuresWithoutProgress, ShortLegs, goneBad);
        var (step, why, withProgress, without) = LegDecision.Decide(end, settings);
        FailuresWithProgress = withProgress;
        FailuresWithoutProgress = without;
        ShortLegs = ending == "too_short" && step != NextStep.Finish ? ShortLegs + 1 : 0;
        var text = $"{describe}: {why}";
        switch (step)
        {
            case NextStep.Finish:
                FinishedAt = at;
                return (step, Move(RunState.Finished, why, text, at));
            case NextStep.Hold:
                return (step, Move(RunState.Held, why, text, at));
            default:
                return (step, Move(othersOpen ? RunState.Queued : RunState.Planned, "", text, at));
        }
    }

    /// <summary>The checkpoint the next leg restarts from.</summary>
    public void UseCheckpoint(string? path) => Checkpoint = path ?? Checkpoint;

    private void ResetCounters()
    {
        FailuresWithProgress = 0;
        FailuresWithoutProgress = 0;
        StallRestarts = 0;
        ShortLegs = 0;
    }

    private RunTransition Note(string why, DateTimeOffset at)
    {
        UpdatedAt = at;
        return new RunTransition(RunId, State, State, why, at);
    }

    private RunTransition Move(RunState to, string reason, string why, DateTimeOffset at)
    {
        var from = State;
        State = to;
        Reason = reason;
        UpdatedAt = at;
        return new RunTransition(RunId, from, to, why, at);
    }
}
