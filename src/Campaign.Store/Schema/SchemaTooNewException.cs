namespace Campaign.Store.Schema;

/// <summary>The database was written by a newer build of campaign; it is left untouched.</summary>
public sealed class SchemaTooNewException : Exception
{
    /// <summary>Creates the exception with a message that says what to do.</summary>
    public SchemaTooNewException(string message)
        : base(message)
    {
    }
}
