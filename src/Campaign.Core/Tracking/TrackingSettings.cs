using Campaign.Core.Domain;

namespace Campaign.Core.Tracking;

/// <summary>
/// How runs are run and watched ([tracking] in campaign.toml). Paths are relative to the workspace (script) or
/// to each run's folder (checkpoints, progress, markers). Defaults in docs/tracking.md.
/// </summary>
public sealed record TrackingSettings
{
    /// <summary>Folder holding one sub-folder per run.</summary>
    public string RunsFolder { get; init; } = "runs";

    /// <summary>The batch script run for every leg (relative to the workspace).</summary>
    public string Script { get; init; } = "run-leg.sh";

    /// <summary>Wall time asked for each leg, in minutes; null: the cluster's wall-time limit.</summary>
    public double? LegMinutes { get; init; }

    /// <summary>Warning signal sent before the limit so the job can checkpoint (empty: none).</summary>
    public string WarningSignal { get; init; } = "USR1";

    /// <summary>Seconds before the limit that the warning is sent.</summary>
    public int WarningSeconds { get; init; } = 300;

    /// <summary>Checkpoint files: a pattern under the run folder ('*' matches within a file name).</summary>
    public string CheckpointPattern { get; init; } = "checkpoints/ckpt-*.json";

    /// <summary>Suffix of the completion marker written after a checkpoint (empty: use the settle rule).</summary>
    public string CheckpointMarker { get; init; } = ".ok";

    /// <summary>Settle rule: size and modification time unchanged for this long make a checkpoint valid.</summary>
    public double CheckpointSettleSeconds { get; init; } = 120;

    /// <summary>When true, a checkpoint also needs a matching SHA-256 file (checkpoint + ".sha256").</summary>
    public bool CheckpointChecksum { get; init; }

    /// <summary>Progress file under the run folder: lines "t [norm]" (t in M).</summary>
    public string ProgressFile { get; init; } = "progress.dat";

    /// <summary>Instead of the progress file: a regular expression over the leg's output with named groups t and (optionally) norm.</summary>
    public string ProgressRegex { get; init; } = "";

    /// <summary>A file under the run folder whose presence says the run has finished.</summary>
    public string DoneMarker { get; init; } = "DONE";

    /// <summary>Failures after progress are retried up to this many times in a row.</summary>
    public int RetryLimit { get; init; } = 3;

    /// <summary>Failures without progress, in a row, that hold the run.</summary>
    public int FailuresWithoutProgress { get; init; } = 2;

    /// <summary>Running with no new progress for this long is a stall (restart once, then hold).</summary>
    public double StallMinutes { get; init; } = 120;

    /// <summary>Progress points in the window over which the constraint norm's growth rate is fitted.</summary>
    public int GrowthWindow { get; init; } = 20;

    /// <summary>Growth rate of the constraint norm (per M) above which the run is going bad and is held.</summary>
    public double GrowthRateLimit { get; init; } = 0.005;

    /// <summary>Core-hours of each allocation kept back (never planned into).</summary>
    public double ReserveCoreHours { get; init; }

    /// <summary>Pre-queue the next leg with an afterany dependency while one runs.</summary>
    public bool Prequeue { get; init; }

    /// <summary>Command (argument list) run with each event as JSON on standard input; empty: none.</summary>
    public IReadOnlyList<string> NotifyCommand { get; init; } = Array.Empty<string>();

    /// <summary>Seconds between reconcile cycles of `campaign watch`.</summary>
    public double ReconcileSeconds { get; init; } = 60;

    /// <summary>Checks the numeric fields (names as in the config file).</summary>
    public IReadOnlyList<FieldProblem> Validate()
    {
        var checks = new FieldChecks();
        if (LegMinutes is { } minutes)
        {
            checks.InRange("leg_minutes", minutes, 0.02, 100_000);
        }

        checks.InRange("warning_seconds", WarningSeconds, 0, 86_400);
        checks.InRange("checkpoint_settle_seconds", CheckpointSettleSeconds, 0, 86_400);
        checks.InRange("retry_limit", RetryLimit, 0, 100);
        checks.InRange("failures_without_progress", FailuresWithoutProgress, 1, 100);
        checks.InRange("stall_minutes", StallMinutes, 0.01, 100_000);
        checks.InRange("growth_window", GrowthWindow, 3, 100_000);
        checks.InRange("growth_rate_limit", GrowthRateLimit, 1e-9, 100);
        checks.InRange("reserve_core_hours", ReserveCoreHours, 0, 1e12);
        checks.InRange("reconcile_seconds", ReconcileSeconds, 1, 86_400);
        // Paths read or globbed under each run's folder must stay inside it: a config cannot point the tracker at
        // other files (no absolute paths, no '..').
        foreach (var (field, value) in new[] { ("checkpoint_pattern", CheckpointPattern), ("progress_file", ProgressFile), ("done_marker", DoneMarker) })
        {
            if (value.Length == 0 || value.StartsWith('/') || value.StartsWith('\\') || value.Contains(':', StringComparison.Ordinal)
                || value.Split('/', '\\').Any(part => part == ".."))
            {
                checks.Add(field, value, "a relative path inside the run's folder (not absolute, no '..')");
            }
        }

        if (CheckpointMarker.IndexOfAny(new[] { '/', '\\' }) >= 0 || CheckpointMarker.Contains("..", StringComparison.Ordinal))
        {
            checks.Add("checkpoint_marker", CheckpointMarker, "a file-name suffix (no '/' and no '..')");
        }

        if (WarningSignal.Length > 0 && !new[] { "USR1", "USR2", "TERM", "INT", "HUP", "URG" }.Contains(WarningSignal, StringComparer.Ordinal))
        {
            checks.Add("warning_signal", WarningSignal, "one of USR1, USR2, TERM, INT, HUP, URG, or empty for none");
        }

        return checks.Problems;
    }
}
