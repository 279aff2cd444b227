namespace Campaign.Store.Schema;

/// <summary>
/// The schema of campaign.db, as the ordered list of migrations. Append new steps; never edit a released one.
/// </summary>
public static class Migrations
{
    /// <summary>All migrations in order.</summary>
    public static IReadOnlyList<Migration> All { get; } = new[]
    {
        new Migration(1, "workspace and event log", """
            CREATE TABLE workspace_info (
                key   TEXT PRIMARY KEY NOT NULL,
                value TEXT NOT NULL
            ) STRICT;

            CREATE TABLE events (
                id      INTEGER PRIMARY KEY,
                at      TEXT NOT NULL,
                kind    TEXT NOT NULL,
                subject TEXT,
                detail  TEXT NOT NULL
            ) STRICT;
            CREATE INDEX events_by_subject ON events (subject, id);
            """),
        new Migration(2, "run logs and fitted cost models", """
            CREATE TABLE run_logs (
                run_id        TEXT PRIMARY KEY NOT NULL,
                q             REAL NOT NULL,
                chi1x         REAL NOT NULL,
                chi1y         REAL NOT NULL,
                chi1z         REAL NOT NULL,
                chi2x         REAL NOT NULL,
                chi2y         REAL NOT NULL,
                chi2z         REAL NOT NULL,
                omega0        REAL NOT NULL,
                level         INTEGER NOT NULL,
                cores         INTEGER NOT NULL,
                machine       TEXT NOT NULL,
                wall_hours    REAL NOT NULL,
                outcome       TEXT NOT NULL CHECK (outcome IN ('completed', 'failed', 'partial')),
                core_hours    REAL,
                t_end         REAL,
                orbits        REAL,
                segments      INTEGER,
                checkpoint_gb REAL,
                output_gb     REAL,
                started       TEXT,
                finished      TEXT,
                extra_json    TEXT NOT NULL,
                source        TEXT NOT NULL,
                imported_at   TEXT NOT NULL
            ) STRICT;

            CREATE TABLE cost_models (
                id          INTEGER PRIMARY KEY,
                fitted_at   TEXT NOT NULL,
                run_count   INTEGER NOT NULL,
                model_json  TEXT NOT NULL
            ) STRICT;
            """),
        new Migration(3, "plans", """
            CREATE TABLE plans (
                id          INTEGER PRIMARY KEY,
                created_at  TEXT NOT NULL,
                objective   TEXT NOT NULL,
                quantile    REAL NOT NULL,
                value       REAL NOT NULL,
                upper_bound REAL NOT NULL,
                method      TEXT NOT NULL,
                pools_json  TEXT NOT NULL,
                source      TEXT NOT NULL
            ) STRICT;

            CREATE TABLE plan_runs (
                plan_id     INTEGER NOT NULL REFERENCES plans (id),
                config_id   TEXT NOT NULL,
                machine     TEXT NOT NULL,
                q           REAL NOT NULL,
                chi1x       REAL NOT NULL,
                chi1y       REAL NOT NULL,
                chi1z       REAL NOT NULL,
                chi2x       REAL NOT NULL,
                chi2y       REAL NOT NULL,
                chi2z       REAL NOT NULL,
                omega0      REAL NOT NULL,
                levels      TEXT NOT NULL,
                cores       INTEGER NOT NULL,
                cost        REAL NOT NULL,
                median      REAL NOT NULL,
                high        REAL NOT NULL,
                status      TEXT NOT NULL DEFAULT 'planned',
                PRIMARY KEY (plan_id, config_id)
            ) STRICT;
            """),
        new Migration(4, "tracked runs, segments and run events", """
            CREATE TABLE tracked_runs (
                run_id                    TEXT PRIMARY KEY NOT NULL,
                config_id                 TEXT NOT NULL,
                level                     INTEGER NOT NULL,
                machine                   TEXT NOT NULL,
                cores                     INTEGER NOT NULL,
                folder                    TEXT NOT NULL,
                target_length             REAL NOT NULL,
                q                         REAL NOT NULL,
                chi1x                     REAL NOT NULL,
                chi1y                     REAL NOT NULL,
                chi1z                     REAL NOT NULL,
                chi2x                     REAL NOT NULL,
                chi2y                     REAL NOT NULL,
                chi2z                     REAL NOT NULL,
                omega0                    REAL NOT NULL,
                position                  INTEGER NOT NULL,
                state                     TEXT NOT NULL,
                reason                    TEXT NOT NULL DEFAULT '',
                failures_with_progress    INTEGER NOT NULL DEFAULT 0,
                failures_without_progress INTEGER NOT NULL DEFAULT 0,
                stall_restarts            INTEGER NOT NULL DEFAULT 0,
                progress_t                REAL NOT NULL DEFAULT 0,
                progress_at               TEXT,
                norm                      REAL,
                checkpoint                TEXT,
                created_at                TEXT NOT NULL,
                updated_at                TEXT NOT NULL,
                finished_at               TEXT
            ) STRICT;

            CREATE TABLE segments (
                id                    INTEGER PRIMARY KEY,
                run_id                TEXT NOT NULL REFERENCES tracked_runs (run_id),
                number                INTEGER NOT NULL,
                job_name              TEXT NOT NULL UNIQUE,
                job_id                TEXT,
                phase                 TEXT NOT NULL CHECK (phase IN ('intent', 'submitted', 'ended')),
                job_state             TEXT NOT NULL DEFAULT '',
                native_state          TEXT NOT NULL DEFAULT '',
                exit_code             INTEGER,
                signal                INTEGER,
                elapsed_seconds       REAL,
                charged_core_hours    REAL,
                worst_case_core_hours REAL NOT NULL,
                wall_seconds          REAL NOT NULL,
                start_t               REAL NOT NULL,
                restart_from          TEXT,
                cancel_reason         TEXT,
                submitted_at          TEXT NOT NULL,
                ended_at              TEXT,
                UNIQUE (run_id, number)
            ) STRICT;
            CREATE INDEX segments_open ON segments (phase, run_id);

            CREATE TABLE run_events (
                id         INTEGER PRIMARY KEY,
                at         TEXT NOT NULL,
                run_id     TEXT NOT NULL,
                from_state TEXT NOT NULL,
                to_state   TEXT NOT NULL,
                why        TEXT NOT NULL
            ) STRICT;
            CREATE INDEX run_events_by_run ON run_events (run_id, id);
            """),
        new Migration(5, "when segments start running (measured queue waits)", """
            ALTER TABLE segments ADD COLUMN started_at TEXT;
            """),
        new Migration(6, "rehearsal runs (kept out of the run logs)", """
            ALTER TABLE tracked_runs ADD COLUMN rehearsal INTEGER NOT NULL DEFAULT 0;
            """),
    };

    /// <summary>Schema version this build writes.</summary>
    public static int Latest => All[^1].Version;
}
