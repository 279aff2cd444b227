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
        new Migration(7, "one campaign state: plan rows per configuration and level, rehearsals apart, machine faults", """
            PRAGMA defer_foreign_keys = ON;

            CREATE TABLE plan_entries (
                plan_id        INTEGER NOT NULL REFERENCES plans (id),
                config_id      TEXT NOT NULL,
                level          INTEGER NOT NULL,
                kind           TEXT NOT NULL CHECK (kind IN ('run', 'trials')),
                machine        TEXT NOT NULL,
                cores          INTEGER NOT NULL,
                q              REAL NOT NULL,
                chi1x          REAL NOT NULL,
                chi1y          REAL NOT NULL,
                chi1z          REAL NOT NULL,
                chi2x          REAL NOT NULL,
                chi2y          REAL NOT NULL,
                chi2z          REAL NOT NULL,
                omega0         REAL NOT NULL,
                target_length  REAL,
                length_m       REAL NOT NULL,
                median         REAL NOT NULL,
                mean           REAL NOT NULL,
                low            REAL NOT NULL,
                high           REAL NOT NULL,
                wall_hours     REAL NOT NULL,
                segments       INTEGER NOT NULL,
                node_hours     REAL NOT NULL,
                charged        REAL NOT NULL,
                charged_high   REAL NOT NULL,
                cost           REAL NOT NULL,
                checkpoint_gb  REAL NOT NULL,
                output_gb      REAL NOT NULL,
                source         TEXT NOT NULL,
                extrapolation  TEXT NOT NULL,
                log_se         REAL NOT NULL,
                dof            REAL NOT NULL,
                runs           INTEGER NOT NULL,
                PRIMARY KEY (plan_id, config_id, level, kind)
            ) STRICT;

            -- Plans saved before this step kept one row per configuration with its levels summed: split them by
            -- 2^level (the only information there is) and mark them so; their target length is computed at adoption.
            WITH RECURSIVE split (plan_id, config_id, rest, level) AS (
                SELECT plan_id, config_id, levels || ';', NULL FROM plan_runs
                UNION ALL
                SELECT plan_id, config_id, substr(rest, instr(rest, ';') + 1), CAST(substr(rest, 1, instr(rest, ';') - 1) AS INTEGER)
                FROM split WHERE rest <> ''
            ),
            levels AS (SELECT plan_id, config_id, level FROM split WHERE level IS NOT NULL),
            weights AS (SELECT plan_id, config_id, SUM(1 << level) AS total FROM levels GROUP BY plan_id, config_id)
            INSERT INTO plan_entries (plan_id, config_id, level, kind, machine, cores, q, chi1x, chi1y, chi1z, chi2x, chi2y, chi2z, omega0,
                target_length, length_m, median, mean, low, high, wall_hours, segments, node_hours, charged, charged_high, cost,
                checkpoint_gb, output_gb, source, extrapolation, log_se, dof, runs)
            SELECT p.plan_id, p.config_id, l.level, 'run', p.machine, p.cores, p.q, p.chi1x, p.chi1y, p.chi1z, p.chi2x, p.chi2y, p.chi2z, p.omega0,
                NULL, 0, p.median * (1 << l.level) / w.total, p.median * (1 << l.level) / w.total, p.median * (1 << l.level) / w.total,
                p.high * (1 << l.level) / w.total, 0, 0, 0, p.median * (1 << l.level) / w.total, p.high * (1 << l.level) / w.total,
                p.cost * (1 << l.level) / w.total, 0, 0, 'migrated', '', 0, 1e308, 1
            FROM plan_runs p JOIN levels l USING (plan_id, config_id) JOIN weights w USING (plan_id, config_id);
            DROP TABLE plan_runs;

            ALTER TABLE plans ADD COLUMN carried_json TEXT NOT NULL DEFAULT '[]';
            ALTER TABLE plans ADD COLUMN reserved_json TEXT NOT NULL DEFAULT '{}';

            -- A rehearsal is its own kind of run with its own id, so a real run of the same configuration and level
            -- can be tracked beside it. Job names already given to the batch systems stay as they were.
            UPDATE tracked_runs SET run_id = run_id || '.r1' WHERE rehearsal = 1;
            UPDATE segments SET run_id = run_id || '.r1' WHERE run_id IN (SELECT substr(run_id, 1, length(run_id) - 3) FROM tracked_runs WHERE rehearsal = 1);
            UPDATE run_events SET run_id = run_id || '.r1' WHERE run_id IN (SELECT substr(run_id, 1, length(run_id) - 3) FROM tracked_runs WHERE rehearsal = 1);

            CREATE TABLE machine_faults (
                machine  TEXT PRIMARY KEY NOT NULL,
                since    TEXT NOT NULL,
                last_at  TEXT NOT NULL,
                message  TEXT NOT NULL
            ) STRICT;

            ALTER TABLE cost_models ADD COLUMN length_json TEXT;
            ALTER TABLE cost_models ADD COLUMN storage_json TEXT;

            -- Segments that ended by the warning signal before the code made any progress, in a row (too short, not failures).
            ALTER TABLE tracked_runs ADD COLUMN short_segments INTEGER NOT NULL DEFAULT 0;
            """),
        new Migration(8, "a workspace id: in job names, and to know the database is still the one opened", """
            INSERT INTO workspace_info (key, value) VALUES ('workspace_id', lower(hex(randomblob(4))))
            ON CONFLICT (key) DO NOTHING;
            """),
        new Migration(9, "our own words: legs, resolution labels in run ids, our job states", """
            PRAGMA defer_foreign_keys = ON;

            -- One job in a run's chain is a leg.
            ALTER TABLE segments RENAME TO legs;
            DROP INDEX segments_open;
            CREATE INDEX legs_open ON legs (phase, run_id);
            ALTER TABLE tracked_runs RENAME COLUMN short_segments TO short_legs;
            ALTER TABLE plan_entries RENAME COLUMN segments TO legs;
            ALTER TABLE run_logs RENAME COLUMN segments TO legs;

            -- Run ids carry ".resN" for the resolution. The former id is kept: jobs given to a batch system before
            -- the upgrade carry it in their names, and a look-up by name must still find them (nothing submitted twice).
            ALTER TABLE tracked_runs ADD COLUMN former_id TEXT;
            CREATE TEMP TABLE renamed AS
                SELECT run_id AS old_id,
                       config_id || '.res' || level || substr(run_id, length(config_id || '.L' || level) + 1) AS new_id
                FROM tracked_runs
                WHERE substr(run_id, 1, length(config_id || '.L' || level)) = config_id || '.L' || level
                  AND (length(run_id) = length(config_id || '.L' || level)
                       OR substr(run_id, length(config_id || '.L' || level) + 1, 1) = '.');
            UPDATE tracked_runs SET former_id = run_id, run_id = (SELECT new_id FROM renamed WHERE old_id = tracked_runs.run_id)
                WHERE run_id IN (SELECT old_id FROM renamed);
            UPDATE legs SET run_id = (SELECT new_id FROM renamed WHERE old_id = legs.run_id) WHERE run_id IN (SELECT old_id FROM renamed);
            UPDATE run_events SET run_id = (SELECT new_id FROM renamed WHERE old_id = run_events.run_id) WHERE run_id IN (SELECT old_id FROM renamed);
            UPDATE run_logs SET run_id = (SELECT new_id FROM renamed WHERE old_id = run_logs.run_id)
                WHERE source = 'campaign tracking' AND run_id IN (SELECT old_id FROM renamed)
                  AND NOT EXISTS (SELECT 1 FROM run_logs o WHERE o.run_id = (SELECT new_id FROM renamed WHERE old_id = run_logs.run_id));
            DROP TABLE renamed;

            -- One word for the places runs run: clusters (the workstation profile is one too).
            ALTER TABLE tracked_runs RENAME COLUMN machine TO cluster;
            ALTER TABLE plan_entries RENAME COLUMN machine TO cluster;
            ALTER TABLE run_logs RENAME COLUMN machine TO cluster;
            ALTER TABLE machine_faults RENAME TO cluster_faults;
            ALTER TABLE cluster_faults RENAME COLUMN machine TO cluster;
            UPDATE plans SET carried_json = replace(carried_json, '"Machine":', '"Cluster":');
            -- (System.Text.Json writes '+' as \u002B.)
            UPDATE cost_models SET model_json = replace(replace(replace(replace(model_json, '"Machines":', '"Clusters":'), '"machine:', '"cluster:'),
                '+machine"', '+cluster"'), '\u002Bmachine"', '\u002Bcluster"');

            -- Campaign's own job states (the batch system's own word stays in native_state).
            UPDATE legs SET job_state = CASE job_state
                WHEN 'Pending' THEN 'waiting' WHEN 'Requeued' THEN 'waiting'
                WHEN 'Running' THEN 'working' WHEN 'Finishing' THEN 'working'
                WHEN 'Suspended' THEN 'paused'
                WHEN 'Completed' THEN 'succeeded'
                WHEN 'TimedOut' THEN 'out_of_time'
                WHEN 'Failed' THEN 'crashed' WHEN 'OutOfMemory' THEN 'crashed' WHEN 'LaunchFailed' THEN 'crashed' WHEN 'DeadlineMissed' THEN 'crashed'
                WHEN 'NodeFailed' THEN 'interrupted' WHEN 'Preempted' THEN 'interrupted'
                WHEN 'Cancelled' THEN 'stopped'
                WHEN 'Unknown' THEN 'unrecognised'
                WHEN 'Missing' THEN 'vanished'
                ELSE job_state END;
            """),
    };

    /// <summary>Schema version this build writes.</summary>
    public static int Latest => All[^1].Version;
}
