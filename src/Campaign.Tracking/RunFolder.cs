using System.Security.Cryptography;
using Campaign.Core.Tracking;

namespace Campaign.Tracking;

/// <summary>What the tracker reads from a run's folder: progress, checkpoints and the done marker.</summary>
public sealed class RunFolder
{
    private readonly TrackingSettings _settings;

    public RunFolder(string path, TrackingSettings settings)
    {
        Path = path;
        _settings = settings;
    }

    public string Path { get; }

    public bool IsDone => File.Exists(System.IO.Path.Combine(Path, _settings.DoneMarker));

    /// <summary>Progress reports from the progress file, or from the leg logs when a regex is configured.</summary>
    public IReadOnlyList<ProgressPoint> Progress()
    {
        if (_settings.ProgressRegex.Length > 0)
        {
            var logs = Directory.Exists(System.IO.Path.Combine(Path, "logs"))
                ? Directory.EnumerateFiles(System.IO.Path.Combine(Path, "logs"), "*.out").Order(StringComparer.Ordinal).Select(ReadShared)
                : Enumerable.Empty<string>();
            return ProgressSeries.FromLog(string.Join("\n", logs), _settings.ProgressRegex);
        }

        var file = System.IO.Path.Combine(Path, _settings.ProgressFile);
        return File.Exists(file) ? ProgressSeries.FromColumns(ReadShared(file)) : Array.Empty<ProgressPoint>();
    }

    /// <summary>Every file matching the checkpoint pattern, with what the validity rule needs.</summary>
    public IReadOnlyList<CheckpointFile> CheckpointFiles()
    {
        var pattern = _settings.CheckpointPattern;
        var folder = System.IO.Path.Combine(Path, System.IO.Path.GetDirectoryName(pattern) ?? "");
        if (!Directory.Exists(folder))
        {
            return Array.Empty<CheckpointFile>();
        }

        var marker = _settings.CheckpointMarker;
        return Directory.EnumerateFiles(folder, System.IO.Path.GetFileName(pattern))
            .Where(f => marker.Length == 0 || !f.EndsWith(marker, StringComparison.Ordinal))
            .Where(f => !f.EndsWith(".sha256", StringComparison.Ordinal))
            .Select(f =>
            {
                var info = new FileInfo(f);
                bool? checksum = _settings.CheckpointChecksum ? ChecksumMatches(f) : null;
                return new CheckpointFile(f, info.Length, info.LastWriteTimeUtc, marker.Length > 0 && File.Exists(f + marker), checksum);
            })
            .ToList();
    }

    /// <summary>Total size (GB) of the checkpoint files and of everything else in the folder.</summary>
    public (double CheckpointGb, double OutputGb) Sizes()
    {
        var all = Directory.EnumerateFiles(Path, "*", SearchOption.AllDirectories).Select(f => new FileInfo(f)).ToList();
        var checkpoints = CheckpointFiles().Select(c => c.Path).ToHashSet();
        var newest = CheckpointFiles().OrderByDescending(c => c.Modified).FirstOrDefault();
        return ((newest?.Size ?? 0) / 1e9, all.Where(f => !checkpoints.Contains(f.FullName)).Sum(f => f.Length) / 1e9);
    }

    private static bool ChecksumMatches(string file)
    {
        var sumFile = file + ".sha256";
        if (!File.Exists(sumFile))
        {
            return false;
        }

        var expected = File.ReadAllText(sumFile).Split(' ', StringSplitOptions.RemoveEmptyEntries).FirstOrDefault() ?? "";
        using var stream = File.OpenRead(file);
        return Convert.ToHexString(SHA256.HashData(stream)).Equals(expected, StringComparison.OrdinalIgnoreCase);
    }

    private static string ReadShared(string path)
    {
        using var stream = new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.ReadWrite | FileShare.Delete);
        using var reader = new StreamReader(stream);
        return reader.ReadToEnd();
    }
}
