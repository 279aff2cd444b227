using Campaign.Core.Physics;

namespace Campaign.Core.Domain;

/// <summary>Defaults applied to planned runs that do not say otherwise.</summary>
/// <param name="Levels">Resolution levels each configuration is run at.</param>
/// <param name="Cores">Cores per job, when a candidate does not give them.</param>
public sealed record RunDefaults(IReadOnlyList<int> Levels, int? Cores);

/// <summary>
/// The human-edited settings of one workspace (campaign.toml): the campaign's name, the clusters it may use,
/// its allocations, defaults for planned runs and the run-length settings.
/// </summary>
public sealed record WorkspaceConfig(
    string Name,
    IReadOnlyList<string> Clusters,
    string DefaultCluster,
    IReadOnlyList<Allocation> Allocations,
    RunDefaults Defaults,
    LengthSettings Length,
    Selection.ParameterSpace Selection,
    Tracking.TrackingSettings Tracking)
{
    /// <summary>Things read but worth a word: fields written under a former name ("file:line:column: ...").</summary>
    public IReadOnlyList<string> Notices { get; init; } = Array.Empty<string>();
}
