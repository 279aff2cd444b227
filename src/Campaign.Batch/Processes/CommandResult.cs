namespace Campaign.Batch.Processes;

/// <summary>What a finished command printed and returned.</summary>
public sealed record CommandResult(int ExitCode, string StandardOutput, string StandardError);
