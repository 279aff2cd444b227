using Campaign.Core.Tracking;

namespace Campaign.Tracking.Sites;

/// <summary>Run folders on this host, under the workspace: read directly, the leg script used where it is.</summary>
public sealed class LocalRunSite : IRunSite
{
    private readonly string _root;

    /// <summary>Run folders under the workspace in <paramref name="root"/>.</summary>
    public LocalRunSite(string root) => _root = root;

    /// <inheritdoc />
    public string PathOf(string relativeFolder) => Path.Combine(_root, relativeFolder);

    /// <inheritdoc />
    public Task<IReadOnlyDictionary<string, FolderView>> InspectAsync(IReadOnlyList<FolderQuery> folders, TrackingSettings settings, CancellationToken cancellationToken)
    {
        var views = new Dictionary<string, FolderView>(StringComparer.Ordinal);
        foreach (var query in folders)
        {
            views[query.Path] = Read(query, settings);
        }

        return Task.FromResult<IReadOnlyDictionary<string, FolderView>>(views);
    }

    /// <inheritdoc />
    public Task<PreparedFolders> PrepareAsync(IReadOnlyList<FolderToPrepare> folders, string script, CancellationToken cancellationToken)
    {
        var scripts = new Dictionary<string, string>(StringComparer.Ordinal);
        var problems = new Dictionary<string, string>(StringComparer.Ordinal);
        foreach (var folder in folders)
        {
            try
            {
                Directory.CreateDirectory(Path.Combine(folder.SiteFolder, "logs"));
                scripts[folder.RunId] = script;
            }
            catch (Exception e) when (e is IOException or UnauthorizedAccessException)
            {
                // One run folder's trouble never stops the others; the run is tried again next cycle.
                problems[folder.RunId] = e.Message;
            }
        }

        return Task.FromResult(new PreparedFolders(scripts, problems));
    }

    private static FolderView Read(FolderQuery query, TrackingSettings settings)
    {
        if (!Directory.Exists(query.Path))
        {
            return FolderView.Empty(query.Path);
        }

        var folder = new RunFolder(query.Path, settings);
        var checkpoints = folder.CheckpointFiles();
        double? checkpointGb = null, outputGb = null;
        if (query.Sizes)
        {
            (checkpointGb, outputGb) = folder.Sizes();
        }

        return new FolderView(query.Path, true, folder.IsDone, folder.Progress(), checkpoints, checkpointGb, outputGb);
    }
}
