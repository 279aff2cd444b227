namespace Campaign.Core.Tracking;

/// <summary>What to do when a run's leg has ended.</summary>
public enum NextStep
{
    /// <summary>The run reached its target: finished.</summary>
    Finish,

    /// <summary>Submit the next leg from the newest valid checkpoint.</summary>
    Continue,

    /// <summary>Hold the run for a human, with the reason.</summary>
    Hold,
}

/// <summary>How a leg ended, as the tracker sees it.</summary>
/// <param name="Ending">"succeeded", "out_of_time", "interrupted" (by the cluster), "crashed", "stopped",
/// "stopped_for_stall", "vanished", or "too_short" (ended by the warning
/// signal before the code made any progress: the leg did not leave the code time to start).</param>
/// <param name="ProgressBefore">Simulated time when the leg was submitted.</param>
/// <param name="ProgressAfter">Simulated time reported now.</param>
/// <param name="Target">The run's target length.</param>
/// <param name="DoneMarker">True when the run's done marker exists.</param>
/// <param name="FailuresWithProgress">Failures in a row so far that still made progress.</param>
/// <param name="FailuresWithoutProgress">Failures in a row so far without progress.</param>
/// <param name="ShortLegs">Legs in a row so far that were too short (ended by the warning before any progress).</param>
/// <param name="GoneBad">Why the run's output shows it has gone bad (a non-finite norm), or null.</param>
public sealed record LegEnd(string Ending, double ProgressBefore, double ProgressAfter, double Target, bool DoneMarker, int FailuresWithProgress, int FailuresWithoutProgress, int ShortLegs = 0, string? GoneBad = null);

/// <summary>The restart rules (docs/tracking.md), as a pure function.</summary>
public static class LegDecision
{
    /// <summary>Endings that are not the run's fault: the next leg simply continues.</summary>
    public static readonly IReadOnlySet<string> Interruptions = new HashSet<string>(StringComparer.Ordinal)
    {
        "succeeded", "out_of_time", "interrupted", "stopped_for_stall",
    };

    /// <summary>Too-short legs in a row after which a run is held.</summary>
    public const int ShortLegLimit = 5;

    /// <summary>How an ending reads in a reason: "leg ran out of time ...".</summary>
    public static string Words(string ending) => ending switch
    {
        "succeeded" => "ended cleanly",
        "out_of_time" => "ran out of time",
        "interrupted" => "was interrupted by the cluster",
        "stopped" => "was stopped",
        "stopped_for_stall" => "was stopped for a stall",
        _ => ending.Replace('_', ' '),
    };

    /// <summary>Decides the next step and the failure counters after it.</summary>
    public static (NextStep Step, string Why, int FailuresWithProgress, int FailuresWithoutProgress) Decide(LegEnd end, TrackingSettings settings)
    {
        if (end.GoneBad is { } bad)
        {
            return (NextStep.Hold, bad, end.FailuresWithProgress, end.FailuresWithoutProgress); // never finished, never logged as completed
        }

        if (end.DoneMarker || end.ProgressAfter >= end.Target * (1 - 1e-9))
        {
            return (NextStep.Finish, end.DoneMarker ? "done marker written" : $"reached t = {end.ProgressAfter:0.#} M of {end.Target:0.#} M", 0, 0);
        }

        var progressed = end.ProgressAfter > end.ProgressBefore;
        if (end.Ending == "too_short" && !progressed)
        {
            var shorts = end.ShortLegs + 1;
            return shorts >= ShortLegLimit
                ? (NextStep.Hold, $"{shorts} legs in a row ended by the warning signal before the code made progress: too short for it to start (raise leg_minutes or lower warning_seconds)", end.FailuresWithProgress, end.FailuresWithoutProgress)
                : (NextStep.Continue, "leg too short: the warning came before the code made progress; not counted as a failure", end.FailuresWithProgress, end.FailuresWithoutProgress);
        }

        if (Interruptions.Contains(end.Ending))
        {
            // A leg that ended cleanly or ran into its wall time without any progress did nothing: it counts as a
            // failure without progress (else a code that never advances would be resubmitted for ever). The
            // interruptions of the cluster (pre-emption, node failure) and the stall rule's own cancel do not.
            if (progressed || end.Ending is not ("succeeded" or "out_of_time"))
            {
                return (NextStep.Continue, $"leg {Words(end.Ending)}; continue from the newest checkpoint", 0, progressed ? 0 : end.FailuresWithoutProgress);
            }
        }

        if (progressed)
        {
            var withProgress = end.FailuresWithProgress + 1;
            return withProgress > settings.RetryLimit
                ? (NextStep.Hold, $"leg {Words(end.Ending)} {withProgress} times in a row (retry limit {settings.RetryLimit})", withProgress, 0)
                : (NextStep.Continue, $"leg {Words(end.Ending)} after progress; retry {withProgress} of {settings.RetryLimit}", withProgress, 0);
        }

        var without = end.FailuresWithoutProgress + 1;
        return without >= settings.FailuresWithoutProgress
            ? (NextStep.Hold, $"leg {Words(end.Ending)} without progress {without} times in a row (t = {end.ProgressAfter:0.#} M)", end.FailuresWithProgress, without)
            : (NextStep.Continue, $"leg {Words(end.Ending)} without progress; trying once more", end.FailuresWithProgress, without);
    }
}
