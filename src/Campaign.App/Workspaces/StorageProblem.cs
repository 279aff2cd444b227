using System.Globalization;
using Campaign.Store.Schema;
using Microsoft.Data.Sqlite;

namespace Campaign.App.Workspaces;

/// <summary>
/// Plain words for storage failures: a full disk, a read-only file system, a folder without write permission.
/// SQLite applies a change in one transaction or not at all, so each message can say that nothing was half-written.
/// </summary>
public static class StorageProblem
{
    /// <summary>
    /// When <paramref name="e"/> is a storage failure (SQLite, a full disk), the message to show and true; the
    /// front end needs no knowledge of the database to report it.
    /// </summary>
    public static bool TryExplain(Exception e, string workspace, out string message)
    {
        message = "";
        if (e is SchemaTooNewException)
        {
            message = e.Message;
            return true;
        }

        if (e is SqliteException || (e is IOException io && IsDiskFull(io)))
        {
            message = Explain(e, workspace);
            return true;
        }

        return false;
    }

    private const int DiskFullErrno = 28; // ENOSPC

    /// <summary>True when the error is a full disk.</summary>
    public static bool IsDiskFull(IOException e) => (e.HResult & 0xFFFF) == DiskFullErrno || e.Message.Contains("No space left", StringComparison.OrdinalIgnoreCase);

    /// <summary>Plain words for a storage failure.</summary>
    public static string Explain(Exception e, string workspace)
    {
        var free = FreeBytes(workspace);
        var code = e is SqliteException s ? s.SqliteErrorCode : 0;
        var detail = e is SqliteException sqlite ? $"SQLite error {sqlite.SqliteErrorCode.ToString(CultureInfo.InvariantCulture)}: {sqlite.Message}" : e.Message;
        if (free is < 1_048_576 || code == 13 || e is IOException)
        {
            return $"{workspace}: the disk is full ({(free is { } f ? f.ToString(CultureInfo.InvariantCulture) + " bytes free" : "free space unknown")}); nothing was half-written. Free some space and run the command again ({detail})";
        }

        if (code == 8 || ReadOnly(workspace))
        {
            return $"{workspace}: the workspace cannot be written (a read-only file system or no write permission); nothing was changed ({detail})";
        }

        if (code == 14)
        {
            return $"{workspace}: cannot open campaign.db: check that the folder exists and is readable and writable by you (SQLite keeps campaign.db-wal and campaign.db-shm beside it) ({detail})";
        }

        if (code is 5 or 6)
        {
            return $"{workspace}: the database stayed busy for longer than the 30 s wait; another command held it; run this one again ({detail})";
        }

        return detail;
    }

    private static long? FreeBytes(string folder)
    {
        try
        {
            return new DriveInfo(Path.GetFullPath(folder)).AvailableFreeSpace;
        }
        catch (Exception e) when (e is IOException or ArgumentException or UnauthorizedAccessException)
        {
            return null;
        }
    }

    private static bool ReadOnly(string folder)
    {
        if (!Directory.Exists(folder))
        {
            return false;
        }

        try
        {
            var probe = Path.Combine(folder, ".campaign-write-probe-" + Environment.ProcessId.ToString(CultureInfo.InvariantCulture));
            File.WriteAllText(probe, "");
            File.Delete(probe);
            return false;
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            return true;
        }
    }
}
