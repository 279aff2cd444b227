namespace Campaign.Batch;

/// <summary>A warning signal sent to the job some seconds before its wall-time limit, so it can checkpoint.</summary>
/// <param name="Signal">Signal name without the SIG prefix: USR1, USR2, TERM, INT, HUP or URG.</param>
/// <param name="SecondsBefore">How long before the limit (Slurm may deliver it up to a minute earlier).</param>
public sealed record WarningSignal(string Signal, int SecondsBefore);

/// <summary>One job leg to submit.</summary>
/// <param name="Name">Job name, made with <see cref="JobName"/> (carries the run id and leg number).</param>
/// <param name="Script">Path of the executable batch script.</param>
/// <param name="WorkingDirectory">Folder the job runs in.</param>
/// <param name="Cores">Cores (tasks) the job needs.</param>
/// <param name="WallTime">Wall-time limit.</param>
/// <param name="OutputPath">File for standard output.</param>
/// <param name="ErrorPath">File for standard error.</param>
/// <param name="Environment">Extra environment variables for the job (e.g. the restart checkpoint path).</param>
/// <param name="AfterAny">Job id this one waits for (to end in any state), or null.</param>
/// <param name="Warning">Warning signal before the limit, or null.</param>
/// <param name="Nodes">Whole nodes to ask for (null: let the batch system pack the cores).</param>
public sealed record JobRequest(
    string Name,
    string Script,
    string WorkingDirectory,
    int Cores,
    TimeSpan WallTime,
    string OutputPath,
    string ErrorPath,
    IReadOnlyDictionary<string, string> Environment,
    string? AfterAny = null,
    WarningSignal? Warning = null,
    int? Nodes = null)
{
    /// <summary>Signals a warning may use.</summary>
    public static readonly string[] WarningSignals = { "USR1", "USR2", "TERM", "INT", "HUP", "URG" };

    /// <summary>Checks the request; throws <see cref="BatchSystemException"/> (permanent) listing every problem.</summary>
    public void Validate()
    {
        var problems = new List<string>();
        if (!JobName.IsValid(Name))
        {
            problems.Add($"name = {Name}: expected {JobName.Rule}");
        }

        if (!Path.IsPathFullyQualified(Script))
        {
            problems.Add($"script = {Script}: expected an absolute path");
        }

        if (!Path.IsPathFullyQualified(WorkingDirectory))
        {
            problems.Add($"working directory = {WorkingDirectory}: expected an absolute path");
        }

        if (Cores < 1)
        {
            problems.Add($"cores = {Cores}: expected at least 1");
        }

        if (WallTime < TimeSpan.FromSeconds(1))
        {
            problems.Add($"wall time = {WallTime}: expected at least one second (Slurm and PBS round up to whole minutes)");
        }

        foreach (var key in Environment.Keys.Where(k => !IsEnvironmentName(k)))
        {
            problems.Add($"environment variable name = {key}: expected letters, digits and '_', not starting with a digit");
        }

        if (Warning is { } w && (!WarningSignals.Contains(w.Signal, StringComparer.Ordinal) || w.SecondsBefore < 1 || w.SecondsBefore >= WallTime.TotalSeconds))
        {
            problems.Add($"warning = {w.Signal}@{w.SecondsBefore}: expected one of {string.Join(", ", WarningSignals)} and 1 to {(int)WallTime.TotalSeconds - 1} seconds");
        }

        if (problems.Count > 0)
        {
            throw new BatchSystemException(BatchErrorKind.Rejected, "invalid job request: " + string.Join("; ", problems));
        }
    }

    private static bool IsEnvironmentName(string name) =>
        name.Length > 0 && !char.IsAsciiDigit(name[0]) && name.All(c => char.IsAsciiLetterOrDigit(c) || c == '_');
}
