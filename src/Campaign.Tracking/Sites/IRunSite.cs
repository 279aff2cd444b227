using Campaign.Core.Tracking;

namespace Campaign.Tracking.Sites;

/// <summary>What the tracker read of one run folder in one cycle: the done marker, progress, checkpoints, sizes.</summary>
/// <param name="Path">The folder on its site.</param>
/// <param name="Exists">False when the folder is not there (yet).</param>
/// <param name="IsDone">True when the done marker is there.</param>
/// <param name="Progress">Progress reports (on a remote site, from the tail of the progress file or leg logs).</param>
/// <param name="Checkpoints">Every file matching the checkpoint pattern, with what the validity rule needs.</param>
/// <param name="CheckpointGb">Size of the newest checkpoint (GB), when sizes were asked for.</param>
/// <param name="OutputGb">Size of everything else in the folder (GB), when sizes were asked for.</param>
public sealed record FolderView(string Path, bool Exists, bool IsDone, IReadOnlyList<ProgressPoint> Progress, IReadOnlyList<CheckpointFile> Checkpoints, double? CheckpointGb, double? OutputGb)
{
    /// <summary>A folder read as empty (none of its facts known).</summary>
    public static FolderView Empty(string path) => new(path, false, false, Array.Empty<ProgressPoint>(), Array.Empty<CheckpointFile>(), null, null);
}

/// <summary>One folder to read, and whether its sizes are wanted (they cost a walk of the folder).</summary>
public sealed record FolderQuery(string Path, bool Sizes);

/// <summary>
/// Where a cluster's run folders live: on this host under the workspace (<see cref="LocalRunSite"/>) or on a remote
/// site under its run root (<see cref="RemoteRunSite"/>). A cycle reads all the folders it needs on one site in one
/// call, and prepares the folders of the legs it submits in one call; a failure to reach the site is a
/// <see cref="Batch.BatchSystemException"/>, and then the cycle leaves that cluster's runs as they were.
/// </summary>
public interface IRunSite
{
    /// <summary>The folder on the site of a run whose folder is <paramref name="relativeFolder"/> in the workspace.</summary>
    string PathOf(string relativeFolder);

    /// <summary>Reads every folder in <paramref name="folders"/>; keyed by path.</summary>
    Task<IReadOnlyDictionary<string, FolderView>> InspectAsync(IReadOnlyList<FolderQuery> folders, TrackingSettings settings, CancellationToken cancellationToken);

    /// <summary>
    /// Makes each folder ready for a leg (its logs folder; on a remote site the leg script and the files the
    /// workspace holds for the run, copied and checked by checksum). Returns the path of the leg script on the site
    /// for each run id, and what went wrong with a folder that could not be prepared.
    /// </summary>
    Task<PreparedFolders> PrepareAsync(IReadOnlyList<FolderToPrepare> folders, string script, CancellationToken cancellationToken);
}

/// <summary>The leg script's path on the site for each prepared run; the problem for each run that is not.</summary>
public sealed record PreparedFolders(IReadOnlyDictionary<string, string> Scripts, IReadOnlyDictionary<string, string> Problems);

/// <summary>A run folder to prepare: the run, its folder in the workspace, its folder on the site.</summary>
public sealed record FolderToPrepare(string RunId, string WorkspaceFolder, string SiteFolder);
