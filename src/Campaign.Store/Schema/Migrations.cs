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
    };

    /// <summary>Schema version this build writes.</summary>
    public static int Latest => All[^1].Version;
}
