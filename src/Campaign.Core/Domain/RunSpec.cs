namespace Campaign.Core.Domain;

/// <summary>
/// A configuration as it will be run: its physics plus the resolution levels to run it at and the cores
/// per job. Each level is a separate simulation; levels are small integers, higher means finer.
/// </summary>
public sealed record RunSpec(string Name, BinaryConfiguration Configuration, IReadOnlyList<int> Levels, int Cores)
{
    /// <summary>Highest resolution level accepted.</summary>
    public const int MaximumLevel = 20;

    /// <summary>Most cores per job accepted.</summary>
    public const int MaximumCores = 10_000_000;
}
