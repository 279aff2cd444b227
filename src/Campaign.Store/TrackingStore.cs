using System.Globalization;
using Campaign.Core.Domain;
using Campaign.Core.Lifecycle;
using Campaign.Core.Tracking;
using Dapper;
using Microsoft.Data.Sqlite;

namespace Campaign.Store;

/// <summary>
/// Reads and writes tracked runs, legs and run events, mapping the typed domain (enums, times) to rows in one
/// place. Callers own the transactions.
/// </summary>
public static class TrackingStore
{
    private const string RunColumns = "run_id AS RunId, config_id AS ConfigId, level AS Level, cluster AS Cluster, cores AS Cores, folder AS Folder, target_length AS TargetLength, q AS Q, chi1x AS Chi1x, chi1y AS Chi1y, chi1z AS Chi1z, chi2x AS Chi2x, chi2y AS Chi2y, chi2z AS Chi2z, omega0 AS Omega0, position AS Position, state AS State, reason AS Reason, failures_with_progress AS FailuresWithProgress, failures_without_progress AS FailuresWithoutProgress, stall_restarts AS StallRestarts, progress_t AS ProgressT, progress_at AS ProgressAt, norm AS Norm, checkpoint AS Checkpoint, created_at AS CreatedAt, updated_at AS UpdatedAt, finished_at AS FinishedAt, rehearsal AS Rehearsal, short_legs AS ShortLegs";

    private const string LegColumns = "id AS Id, run_id AS RunId, number AS Number, job_name AS JobName, job_id AS JobId, phase AS Phase, job_state AS JobState, native_state AS NativeState, exit_code AS ExitCode, signal AS Signal, elapsed_seconds AS ElapsedSeconds, charged_core_hours AS ChargedCoreHours, worst_case_core_hours AS WorstCaseCoreHours, wall_seconds AS WallSeconds, start_t AS StartT, restart_from AS RestartFrom, cancel_reason AS CancelReason, submitted_at AS SubmittedAt, started_at AS StartedAt, ended_at AS EndedAt";

    /// <summary>Every tracked run, in submission order.</summary>
    public static IReadOnlyList<TrackedRun> Runs(SqliteConnection connection, SqliteTransaction? transaction = null) =>
        connection.Query<RunRow>($"SELECT {RunColumns} FROM tracked_runs ORDER BY position, run_id", transaction: transaction).Select(r => r.ToRun()).ToList();

    /// <summary>
    /// The ids that runs tracked before schema version 9 had (keyed by today's id): their jobs of then carry the
    /// former id in their names.
    /// </summary>
    public static IReadOnlyDictionary<string, string> FormerIds(SqliteConnection connection, SqliteTransaction? transaction = null) =>
        connection.Query<(string RunId, string FormerId)>("SELECT run_id, former_id FROM tracked_runs WHERE former_id IS NOT NULL", transaction: transaction)
            .ToDictionary(r => r.RunId, r => r.FormerId, StringComparer.Ordinal);

    /// <summary>One tracked run, or null.</summary>
    public static TrackedRun? Run(SqliteConnection connection, string runId, SqliteTransaction? transaction = null) =>
        connection.QueryFirstOrDefault<RunRow>($"SELECT {RunColumns} FROM tracked_runs WHERE run_id = @runId", new { runId }, transaction)?.ToRun();

    /// <summary>Every tracked run as the read-only view.</summary>
    public static IReadOnlyList<RunRecord> Records(SqliteConnection connection, SqliteTransaction? transaction = null) =>
        Runs(connection, transaction).Select(r => r.ToRecord()).ToList();

    /// <summary>Every leg.</summary>
    public static IReadOnlyList<JobLeg> Legs(SqliteConnection connection, SqliteTransaction? transaction = null) =>
        connection.Query<LegRow>($"SELECT {LegColumns} FROM legs ORDER BY run_id, number", transaction: transaction).Select(s => s.ToLeg()).ToList();

    /// <summary>The legs of one run, in order.</summary>
    public static IReadOnlyList<JobLeg> LegsOf(SqliteConnection connection, string runId, SqliteTransaction? transaction = null) =>
        connection.Query<LegRow>($"SELECT {LegColumns} FROM legs WHERE run_id = @runId ORDER BY number", new { runId }, transaction).Select(s => s.ToLeg()).ToList();

    /// <summary>Every leg's charge (or commitment), with the cluster of its run.</summary>
    public static IReadOnlyList<LegCharge> Charges(SqliteConnection connection, SqliteTransaction? transaction = null) =>
        connection.Query<(string RunId, string Cluster, string Phase, double WorstCase, double? Charged, string SubmittedAt, string? StartedAt, string? EndedAt)>(
            "SELECT s.run_id, r.cluster, s.phase, s.worst_case_core_hours, s.charged_core_hours, s.submitted_at, s.started_at, s.ended_at FROM legs s JOIN tracked_runs r ON r.run_id = s.run_id",
            transaction: transaction)
        .Select(s => new LegCharge(s.RunId, s.Cluster, PhaseOf(s.Phase), s.WorstCase, s.Charged, Time(s.SubmittedAt), OptionalTime(s.StartedAt), OptionalTime(s.EndedAt)))
        .ToList();

    /// <summary>The run events, oldest first (of one run, or all).</summary>
    public static IReadOnlyList<RunEvent> Events(SqliteConnection connection, string? runId = null) =>
        connection.Query<RunEvent>(
            "SELECT id AS Id, at AS At, run_id AS RunId, from_state AS FromState, to_state AS ToState, why AS Why FROM run_events WHERE @runId IS NULL OR run_id = @runId ORDER BY id",
            new { runId }).ToList();

    /// <summary>Adds a new run with its first event.</summary>
    public static void Add(SqliteConnection connection, SqliteTransaction transaction, TrackedRun run, RunTransition added)
    {
        connection.Execute(
            """
            INSERT INTO tracked_runs (run_id, config_id, level, cluster, cores, folder, target_length, q, chi1x, chi1y, chi1z, chi2x, chi2y, chi2z, omega0,
                position, state, reason, created_at, updated_at, rehearsal)
            VALUES (@RunId, @ConfigId, @Level, @Cluster, @Cores, @Folder, @TargetLength, @Q, @Chi1x, @Chi1y, @Chi1z, @Chi2x, @Chi2y, @Chi2z, @Omega0,
                @Position, @State, @Reason, @CreatedAt, @UpdatedAt, @Rehearsal)
            """,
            ConfigurationColumns.Parameters(run.Configuration, new
            {
                run.RunId,
                run.ConfigId,
                run.Level,
                run.Cluster,
                run.Cores,
                run.Folder,
                run.TargetLength,
                run.Position,
                State = run.State.Name(),
                run.Reason,
                CreatedAt = Text(run.CreatedAt),
                UpdatedAt = Text(run.UpdatedAt),
                run.Rehearsal,
            }),
            transaction);
        Event(connection, transaction, added);
    }

    /// <summary>Saves every changing field of a run, and the transition it went through (if any) as an event.</summary>
    public static void Save(SqliteConnection connection, SqliteTransaction transaction, TrackedRun run, RunTransition? transition = null)
    {
        connection.Execute(
            """
            UPDATE tracked_runs SET state = @State, reason = @Reason, failures_with_progress = @FailuresWithProgress,
                failures_without_progress = @FailuresWithoutProgress, stall_restarts = @StallRestarts, progress_t = @Progress, progress_at = @ProgressAt,
                norm = @Norm, checkpoint = @Checkpoint, updated_at = @UpdatedAt, finished_at = @FinishedAt, short_legs = @ShortLegs
            WHERE run_id = @RunId
            """,
            new
            {
                run.RunId,
                State = run.State.Name(),
                run.Reason,
                run.FailuresWithProgress,
                run.FailuresWithoutProgress,
                run.StallRestarts,
                run.Progress,
                ProgressAt = OptionalText(run.ProgressAt),
                run.Norm,
                run.Checkpoint,
                UpdatedAt = Text(run.UpdatedAt),
                FinishedAt = OptionalText(run.FinishedAt),
                run.ShortLegs,
            },
            transaction);
        if (transition is not null)
        {
            Event(connection, transaction, transition);
        }
    }

    /// <summary>Inserts a leg (its id is set).</summary>
    public static void Insert(SqliteConnection connection, SqliteTransaction transaction, JobLeg leg) =>
        leg.Id = connection.ExecuteScalar<long>(
            """
            INSERT INTO legs (run_id, number, job_name, job_id, phase, worst_case_core_hours, wall_seconds, start_t, restart_from, submitted_at)
            VALUES (@RunId, @Number, @JobName, @JobId, @Phase, @WorstCase, @WallSeconds, @StartT, @RestartFrom, @SubmittedAt) RETURNING id
            """,
            new
            {
                leg.RunId,
                leg.Number,
                leg.JobName,
                leg.JobId,
                Phase = NameOf(leg.Phase),
                leg.WorstCase,
                WallSeconds = leg.Wall.TotalSeconds,
                leg.StartT,
                leg.RestartFrom,
                SubmittedAt = Text(leg.SubmittedAt),
            },
            transaction);

    /// <summary>Saves every changing field of a leg.</summary>
    public static void Save(SqliteConnection connection, SqliteTransaction transaction, JobLeg leg) =>
        connection.Execute(
            """
            UPDATE legs SET job_id = @JobId, phase = @Phase, job_state = @JobState, native_state = @NativeState, exit_code = @ExitCode, signal = @Signal,
                elapsed_seconds = @ElapsedSeconds, charged_core_hours = @Charged, cancel_reason = @CancelReason, started_at = @StartedAt, ended_at = @EndedAt
            WHERE id = @Id
            """,
            new
            {
                leg.Id,
                leg.JobId,
                Phase = NameOf(leg.Phase),
                leg.JobState,
                leg.NativeState,
                leg.ExitCode,
                leg.Signal,
                ElapsedSeconds = leg.Elapsed?.TotalSeconds,
                leg.Charged,
                leg.CancelReason,
                StartedAt = OptionalText(leg.StartedAt),
                EndedAt = OptionalText(leg.EndedAt),
            },
            transaction);

    /// <summary>Removes a leg that was only an intent (the batch system never received it).</summary>
    public static void DeleteIntent(SqliteConnection connection, SqliteTransaction transaction, long legId) =>
        connection.Execute("DELETE FROM legs WHERE id = @legId AND phase = 'intent'", new { legId }, transaction);

    /// <summary>Writes a run's transition (or note) into the event log.</summary>
    public static void Event(SqliteConnection connection, SqliteTransaction transaction, RunTransition transition) =>
        connection.Execute(
            "INSERT INTO run_events (at, run_id, from_state, to_state, why) VALUES (@At, @RunId, @From, @To, @Why)",
            new { At = Text(transition.At), transition.RunId, From = transition.From?.Name() ?? "", To = transition.To.Name(), transition.Why },
            transaction);

    /// <summary>
    /// Writes a finished run into the run logs, in the caller's transaction; returns false (and writes nothing)
    /// when a run imported from a file has the same id: an imported log is never overwritten.
    /// </summary>
    public static bool LogFinishedRun(SqliteConnection connection, SqliteTransaction transaction, RunLog log, DateTimeOffset at)
    {
        if (RunLogStore.Sources(connection, new[] { log.RunId }, transaction).TryGetValue(log.RunId, out var source) && source != RunLogStore.TrackingSource)
        {
            return false;
        }

        RunLogStore.Upsert(connection, transaction, log, "{}", RunLogStore.TrackingSource, Text(at));
        return true;
    }

    /// <summary>The stored name of a leg phase.</summary>
    public static string NameOf(LegPhase phase) => phase switch
    {
        LegPhase.Intent => "intent",
        LegPhase.Submitted => "submitted",
        _ => "ended",
    };

    /// <summary>Parses a stored leg phase.</summary>
    public static LegPhase PhaseOf(string name) => name switch
    {
        "intent" => LegPhase.Intent,
        "submitted" => LegPhase.Submitted,
        "ended" => LegPhase.Ended,
        _ => throw new InvalidDataException($"legs.phase = {name}: expected intent, submitted or ended"),
    };

    private static string Text(DateTimeOffset at) => at.ToString("O", CultureInfo.InvariantCulture);

    private static string? OptionalText(DateTimeOffset? at) => at is { } t ? Text(t) : null;

    private static DateTimeOffset Time(string text) => DateTimeOffset.Parse(text, CultureInfo.InvariantCulture);

    private static DateTimeOffset? OptionalTime(string? text) => text is null ? null : Time(text);

    private sealed class RunRow : ConfigurationColumns
    {
        public string RunId { get; set; } = "";

        public string ConfigId { get; set; } = "";

        public long Level { get; set; }

        public string Cluster { get; set; } = "";

        public long Cores { get; set; }

        public string Folder { get; set; } = "";

        public double TargetLength { get; set; }

        public long Position { get; set; }

        public string State { get; set; } = "planned";

        public string Reason { get; set; } = "";

        public long FailuresWithProgress { get; set; }

        public long FailuresWithoutProgress { get; set; }

        public long StallRestarts { get; set; }

        public double ProgressT { get; set; }

        public string? ProgressAt { get; set; }

        public double? Norm { get; set; }

        public string? Checkpoint { get; set; }

        public string CreatedAt { get; set; } = "";

        public string UpdatedAt { get; set; } = "";

        public string? FinishedAt { get; set; }

        public bool Rehearsal { get; set; }

        public long ShortLegs { get; set; }

        public TrackedRun ToRun() => TrackedRun.Restore(
            RunId, ConfigId, (int)Level, Cluster, (int)Cores, Folder, TargetLength, Configuration, Position, Rehearsal, Time(CreatedAt),
            RunStates.Parse(State), Reason, (int)FailuresWithProgress, (int)FailuresWithoutProgress, (int)StallRestarts, (int)ShortLegs, ProgressT, OptionalTime(ProgressAt), Norm, Checkpoint,
            Time(UpdatedAt), OptionalTime(FinishedAt));
    }

    private sealed class LegRow
    {
        public long Id { get; set; }

        public string RunId { get; set; } = "";

        public long Number { get; set; }

        public string JobName { get; set; } = "";

        public string? JobId { get; set; }

        public string Phase { get; set; } = "intent";

        public string JobState { get; set; } = "";

        public string NativeState { get; set; } = "";

        public long? ExitCode { get; set; }

        public long? Signal { get; set; }

        public double? ElapsedSeconds { get; set; }

        public double? ChargedCoreHours { get; set; }

        public double WorstCaseCoreHours { get; set; }

        public double WallSeconds { get; set; }

        public double StartT { get; set; }

        public string? RestartFrom { get; set; }

        public string? CancelReason { get; set; }

        public string SubmittedAt { get; set; } = "";

        public string? StartedAt { get; set; }

        public string? EndedAt { get; set; }

        public JobLeg ToLeg() => JobLeg.Restore(
            Id, RunId, (int)Number, JobName, JobId, PhaseOf(Phase), JobState, NativeState, (int?)ExitCode, (int?)Signal, ElapsedSeconds is { } e ? TimeSpan.FromSeconds(e) : null,
            ChargedCoreHours, WorstCaseCoreHours, TimeSpan.FromSeconds(WallSeconds), StartT, RestartFrom, CancelReason, Time(SubmittedAt), OptionalTime(StartedAt), OptionalTime(EndedAt));
    }
}
