namespace Campaign.Core.Tracking;

/// <summary>What is known about one checkpoint file on disk.</summary>
/// <param name="Path">Full path.</param>
/// <param name="Size">Size in bytes.</param>
/// <param name="Modified">Last modification time.</param>
/// <param name="HasMarker">True when its completion marker exists.</param>
/// <param name="ChecksumOk">True/false when a checksum file was checked, null when none is required.</param>
public sealed record CheckpointFile(string Path, long Size, DateTimeOffset Modified, bool HasMarker, bool? ChecksumOk);

/// <summary>Picks the restart point among a run's checkpoint files.</summary>
public static class Checkpoints
{
    /// <summary>
    /// The newest valid checkpoint (by modification time, then name) and the newer ones passed over with why.
    /// Valid: non-empty; with a marker rule, its marker exists; otherwise unchanged for the settle time; and, when
    /// checksums are required, its checksum matches.
    /// </summary>
    public static (CheckpointFile? Newest, IReadOnlyList<(CheckpointFile File, string Why)> Skipped) NewestValid(
        IReadOnlyList<CheckpointFile> files, bool markerRule, TimeSpan settle, DateTimeOffset now)
    {
        var skipped = new List<(CheckpointFile, string)>();
        foreach (var file in files.OrderByDescending(f => f.Modified).ThenByDescending(f => f.Path, StringComparer.Ordinal))
        {
            var why = file.Size == 0 ? "empty"
                : markerRule && !file.HasMarker ? "no completion marker (half-written?)"
                : !markerRule && now - file.Modified < settle ? "still changing (not settled)"
                : file.ChecksumOk == false ? "checksum does not match (corrupt)"
                : null;
            if (why is null)
            {
                return (file, skipped);
            }

            skipped.Add((file, why));
        }

        return (null, skipped);
    }
}
