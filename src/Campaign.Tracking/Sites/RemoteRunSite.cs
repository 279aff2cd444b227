using System.Globalization;
using System.Reflection;
using System.Security.Cryptography;
using System.Text;
using Campaign.Batch;
using Campaign.Batch.Processes;
using Campaign.Core.Tracking;

namespace Campaign.Tracking.Sites;

/// <summary>
/// Run folders on a remote site, under its run root, reached through an <see cref="IShell"/> (ssh). One call reads
/// every folder a cycle needs (<c>sites/inspect.sh</c>: done markers, checkpoint lists with size, time, marker and
/// a checksum verified remotely, the tails of the progress files, sizes on request), and one call stages the leg
/// script and the run's own files into the folders of the legs about to be submitted (<c>sites/stage.sh</c>,
/// checked by checksum on arrival and in place; a changed script is staged again). The folder list and the files
/// travel on standard input; the scripts' arguments are quoted words. Checkpoints and output stay on the site.
/// Needs a POSIX sh with the usual tools (stat, sha256sum, base64, tail, du, mktemp) on the site.
/// </summary>
public sealed class RemoteRunSite : IRunSite
{
    /// <summary>Bytes of each progress file (or leg log) the inspection brings back: its newest reports.</summary>
    public const int TailBytes = 8192;

    private static readonly string InspectScript = Script("sites/inspect.sh");
    private static readonly string StageScript = Script("sites/stage.sh");

    private readonly IShell _shell;
    private readonly string _runRoot;

    /// <summary>Run folders under <paramref name="runRoot"/> on the site <paramref name="shell"/> reaches.</summary>
    public RemoteRunSite(IShell shell, string runRoot)
    {
        _shell = shell;
        _runRoot = runRoot.TrimEnd('/');
    }

    /// <inheritdoc />
    public string PathOf(string relativeFolder) => _runRoot + "/" + relativeFolder.Replace('\\', '/').Trim('/');

    /// <inheritdoc />
    public async Task<IReadOnlyDictionary<string, FolderView>> InspectAsync(IReadOnlyList<FolderQuery> folders, TrackingSettings settings, CancellationToken cancellationToken)
    {
        if (folders.Count == 0)
        {
            return new Dictionary<string, FolderView>();
        }

        var pattern = settings.CheckpointPattern.Replace('\\', '/');
        var slash = pattern.LastIndexOf('/');
        var arguments = new[]
        {
            "-c", InspectScript, "campaign-inspect",
            settings.DoneMarker, settings.ProgressFile, settings.ProgressRegex.Length > 0 ? "1" : "0",
            slash < 0 ? "" : pattern[..slash], slash < 0 ? pattern : pattern[(slash + 1)..], settings.CheckpointMarker,
            settings.CheckpointChecksum ? "1" : "0", TailBytes.ToString(CultureInfo.InvariantCulture),
        };
        var input = new StringBuilder();
        foreach (var folder in folders)
        {
            input.Append(folder.Sizes ? '1' : '0').Append(' ').Append(NoNewline(folder.Path)).Append('\n');
        }

        var result = await _shell.RunAsync("sh", arguments, cancellationToken, input: input.ToString()).ConfigureAwait(false);
        if (result.ExitCode != 0)
        {
            throw new BatchSystemException(BatchErrorKind.Transient, $"{_shell.Where}: reading the run folders failed (exit {result.ExitCode}): {BatchErrorText.FirstLine(result.StandardError)}");
        }

        return ParseInspection(result.StandardOutput, folders, settings);
    }

    /// <summary>Reads the inspection document; an incomplete one (a dropped connection) is a transient error.</summary>
    public static IReadOnlyDictionary<string, FolderView> ParseInspection(string document, IReadOnlyList<FolderQuery> folders, TrackingSettings settings)
    {
        var views = new Dictionary<string, FolderView>(StringComparer.Ordinal);
        var lines = document.Split('\n', StringSplitOptions.RemoveEmptyEntries);
        if (lines.Length == 0 || lines[^1] != "END " + folders.Count.ToString(CultureInfo.InvariantCulture))
        {
            throw new BatchSystemException(BatchErrorKind.Transient, $"the run-folder report ended early ({lines.Length} lines, no END {folders.Count}): the connection was cut");
        }

        Builder? current = null;
        foreach (var line in lines[..^1])
        {
            var parts = line.Split(' ');
            switch (parts[0])
            {
                case "R":
                    if (current is not null)
                    {
                        views[current.Path] = current.Build(settings);
                    }

                    current = new Builder(folders[int.Parse(parts[1], CultureInfo.InvariantCulture)]);
                    break;
                case "X":
                    current!.Exists = false;
                    break;
                case "D":
                    current!.Done = parts[1] == "1";
                    break;
                case "K":
                    var name = Encoding.UTF8.GetString(Convert.FromBase64String(parts[5]));
                    var folder = Path.GetDirectoryName(settings.CheckpointPattern.Replace('\\', '/'))?.Replace('\\', '/') ?? "";
                    var path = current!.Path + "/" + (folder.Length == 0 ? "" : folder + "/") + name;
                    bool? checksum = parts[4] switch { "ok" => true, "bad" or "none" => false, _ => null };
                    current.Checkpoints.Add(new CheckpointFile(path, long.Parse(parts[1], CultureInfo.InvariantCulture),
                        DateTimeOffset.FromUnixTimeSeconds(long.Parse(parts[2], CultureInfo.InvariantCulture)), parts[3] == "1", checksum));
                    break;
                case "T" or "L":
                    var text = Encoding.UTF8.GetString(Convert.FromBase64String(parts.Length > 2 ? parts[2] : ""));
                    if (parts[1] == "1" && text.IndexOf('\n', StringComparison.Ordinal) is var cut and >= 0)
                    {
                        text = text[(cut + 1)..]; // the first line of a tail may be cut in the middle
                    }

                    current!.Text.Append(text).Append('\n');
                    break;
                case "Z":
                    current!.Kib = long.Parse(parts[1], CultureInfo.InvariantCulture);
                    break;
                default:
                    throw new BatchSystemException(BatchErrorKind.Transient, $"the run-folder report has a line Campaign does not read: {BatchErrorText.FirstLine(line)}");
            }
        }

        if (current is not null)
        {
            views[current.Path] = current.Build(settings);
        }

        return views;
    }

    /// <inheritdoc />
    public async Task<PreparedFolders> PrepareAsync(IReadOnlyList<FolderToPrepare> folders, string script, CancellationToken cancellationToken)
    {
        var scripts = new Dictionary<string, string>(StringComparer.Ordinal);
        var none = new Dictionary<string, string>(StringComparer.Ordinal);
        if (folders.Count == 0)
        {
            return new PreparedFolders(scripts, none);
        }

        var pool = new Dictionary<string, byte[]>(StringComparer.Ordinal);
        string Add(byte[] content)
        {
            var sum = Convert.ToHexString(SHA256.HashData(content)).ToLowerInvariant();
            pool[sum] = content;
            return sum;
        }

        var scriptName = Path.GetFileName(script);
        byte[] scriptBytes;
        try
        {
            scriptBytes = await File.ReadAllBytesAsync(script, cancellationToken).ConfigureAwait(false);
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new BatchSystemException(BatchErrorKind.Permanent, $"cannot read the leg script {script}: {e.Message}", e);
        }

        var scriptSum = Add(scriptBytes);
        var placements = new StringBuilder();
        foreach (var folder in folders)
        {
            placements.Append("D ").Append(NoNewline(folder.SiteFolder)).Append('\n');
            placements.Append("P ").Append(scriptSum).Append(" 755 ").Append(NoNewline(scriptName)).Append('\n');
            var own = Directory.Exists(folder.WorkspaceFolder) ? Directory.EnumerateFiles(folder.WorkspaceFolder).Order(StringComparer.Ordinal) : Enumerable.Empty<string>();
            foreach (var file in own.Where(f => Path.GetFileName(f) != scriptName && !Path.GetFileName(f).Any(char.IsControl)))
            {
                placements.Append("P ").Append(Add(await File.ReadAllBytesAsync(file, cancellationToken).ConfigureAwait(false))).Append(" 644 ").Append(Path.GetFileName(file)).Append('\n');
            }

            scripts[folder.RunId] = folder.SiteFolder + "/" + scriptName;
        }

        var input = new StringBuilder();
        foreach (var (sum, content) in pool)
        {
            input.Append("F ").Append(sum).Append(' ').Append(Convert.ToBase64String(content)).Append('\n');
        }

        input.Append(placements);
        var result = await _shell.RunAsync("sh", new[] { "-c", StageScript, "campaign-stage" }, cancellationToken, input: input.ToString()).ConfigureAwait(false);
        var lines = result.StandardOutput.Split('\n', StringSplitOptions.RemoveEmptyEntries);
        var failed = lines.Where(l => l.StartsWith("fail ", StringComparison.Ordinal)).ToList();
        if (failed.Count > 0)
        {
            // A full disk, a quota, a folder without permission: the site's trouble, not one run's. Nothing is
            // submitted there this cycle, and the runs stay as they were.
            throw new BatchSystemException(BatchErrorKind.Transient, $"{_shell.Where}: staging the leg files failed for {failed.Count} of {folders.Count} run folders: {Failure(failed[0], folders)}");
        }

        if (result.ExitCode != 0 || lines.Length == 0 || lines[^1] != "END " + folders.Count.ToString(CultureInfo.InvariantCulture))
        {
            throw new BatchSystemException(BatchErrorKind.Transient, $"{_shell.Where}: staging the leg files did not finish (exit {result.ExitCode}): {BatchErrorText.FirstLine(result.StandardError)}");
        }

        return new PreparedFolders(scripts, none);
    }

    private static string Failure(string line, IReadOnlyList<FolderToPrepare> folders)
    {
        var parts = line.Split(' ', 3);
        var which = int.TryParse(parts[1], NumberStyles.None, CultureInfo.InvariantCulture, out var i) && i < folders.Count ? folders[i].RunId + ": " : "";
        return which + (parts.Length > 2 ? parts[2] : "");
    }

    private static string NoNewline(string text) =>
        text.Contains('\n', StringComparison.Ordinal) || text.Contains('\r', StringComparison.Ordinal)
            ? throw new BatchSystemException(BatchErrorKind.Permanent, $"a path with a line break cannot be used on a remote site: {text.ReplaceLineEndings(" ")}")
            : text;

    private static string Script(string name)
    {
        using var stream = Assembly.GetExecutingAssembly().GetManifestResourceStream(name) ?? throw new InvalidOperationException($"missing resource {name}");
        using var reader = new StreamReader(stream);
        return reader.ReadToEnd();
    }

    private sealed class Builder
    {
        public Builder(FolderQuery query)
        {
            Path = query.Path;
            Sizes = query.Sizes;
        }

        public string Path { get; }

        public bool Sizes { get; }

        public bool Exists { get; set; } = true;

        public bool Done { get; set; }

        public List<CheckpointFile> Checkpoints { get; } = new();

        public StringBuilder Text { get; } = new();

        public long? Kib { get; set; }

        public FolderView Build(TrackingSettings settings)
        {
            if (!Exists)
            {
                return FolderView.Empty(Path);
            }

            var text = Text.ToString();
            var progress = settings.ProgressRegex.Length > 0 ? ProgressSeries.FromLog(text, settings.ProgressRegex) : ProgressSeries.FromColumns(text);
            double? checkpointGb = null, outputGb = null;
            if (Sizes && Kib is { } kib)
            {
                checkpointGb = (Checkpoints.OrderByDescending(c => c.Modified).FirstOrDefault()?.Size ?? 0) / 1e9;
                outputGb = Math.Max(0, (kib * 1024.0) - Checkpoints.Sum(c => c.Size)) / 1e9;
            }

            return new FolderView(Path, true, Done, progress, Checkpoints, checkpointGb, outputGb);
        }
    }
}
