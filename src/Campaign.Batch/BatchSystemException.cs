namespace Campaign.Batch;

/// <summary>Whether an error is worth retrying.</summary>
public enum BatchErrorKind
{
    /// <summary>Likely to pass on a retry: controller unreachable, timeouts, garbled or cut output.</summary>
    Transient,

    /// <summary>Will fail again: a rejected request, a missing command, a permission error.</summary>
    Permanent,
}

/// <summary>A batch-system command failed; <see cref="Kind"/> tells the host whether to retry.</summary>
public sealed class BatchSystemException : Exception
{
    /// <summary>Creates the exception.</summary>
    public BatchSystemException(BatchErrorKind kind, string message, Exception? inner = null)
        : base(message, inner)
    {
        Kind = kind;
    }

    /// <summary>Transient or permanent.</summary>
    public BatchErrorKind Kind { get; }
}
