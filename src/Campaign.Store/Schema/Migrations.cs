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
    };

    /// <summary>Schema version this build writes.</summary>
    public static int Latest => All[^1].Version;
}
