namespace Campaign.Store.Schema;

/// <summary>One numbered schema step. Versions start at 1 and have no gaps.</summary>
/// <param name="Version">Schema version the database is at after this step.</param>
/// <param name="Name">Short description, stored in schema_migrations.</param>
/// <param name="Sql">Statements to run (inside the migration transaction).</param>
public sealed record Migration(int Version, string Name, string Sql);
