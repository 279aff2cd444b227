namespace Campaign.Core.Domain;

/// <summary>
/// Thrown when input data (a configuration, a file, an option value) breaks the rules.
/// Carries every problem found, not only the first, so the user can fix them all at once.
/// </summary>
public sealed class InvalidInputException : Exception
{
    /// <summary>Creates the exception from the located problems; the message lists them one per line.</summary>
    public InvalidInputException(IReadOnlyList<string> problems)
        : base(string.Join(Environment.NewLine, problems))
    {
        if (problems.Count == 0)
        {
            throw new ArgumentException("An input error needs at least one problem.", nameof(problems));
        }

        Problems = problems;
    }

    /// <summary>Each problem as one human-readable line, located where the input has locations.</summary>
    public IReadOnlyList<string> Problems { get; }
}
