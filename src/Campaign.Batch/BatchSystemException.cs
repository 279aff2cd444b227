namespace Campaign.Batch;

/// <summary>Whether an error is worth retrying.</summary>
public enum BatchErrorKind
{
    /// <summary>Likely to pass on a retry: controller unreachable, timeouts, garbled or cut output.</summary>
    Transient,

    /// <summary>Will fail again, and not because of the request: a missing command, an unreadable configuration, a
    /// permission error. A fault of the cluster: nothing is concluded about the runs on it.</summary>
    Permanent,

    /// <summary>The batch system answered and refused this particular request (its account, partition, size or
    /// limits): a fault of the run's request, not of the cluster.</summary>
    Rejected,
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

    /// <summary>Transient, permanent (the cluster's fault) or rejected (the request's).</summary>
    public BatchErrorKind Kind { get; }
}

/// <summary>Text of batch-system errors as tables show it.</summary>
public static class BatchErrorText
{
    /// <summary>The first non-empty line of <paramref name="message"/> (the rest belongs in the event log).</summary>
    public static string FirstLine(string message)
    {
        var line = message.Split('\n').Select(l => l.Trim()).FirstOrDefault(l => l.Length > 0) ?? "";
        return line.Length > 200 ? line[..200] + "..." : line;
    }
}
