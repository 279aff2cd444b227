namespace Campaign.Store;

/// <summary>
/// Files of the workspace that hold the campaign's state and settings are created readable and writable by
/// their owner only (mode 0600): allocations, accounts and run history are not for every user of a shared
/// login node. SQLite creates its -wal and -shm files with the database file's mode.
/// </summary>
public static class OwnerOnly
{
    public const UnixFileMode FileMode = UnixFileMode.UserRead | UnixFileMode.UserWrite;

    /// <summary>Creates <paramref name="path"/> empty with mode 0600 when it does not exist yet (before anything opens it).</summary>
    public static void Create(string path)
    {
        if (File.Exists(path) || OperatingSystem.IsWindows())
        {
            return;
        }

        try
        {
            using var _ = new FileStream(path, new FileStreamOptions { Mode = System.IO.FileMode.CreateNew, Access = FileAccess.Write, UnixCreateMode = FileMode });
        }
        catch (IOException) when (File.Exists(path))
        {
            // created by someone else in between: keep theirs
        }
    }

    /// <summary>Writes <paramref name="text"/> to <paramref name="path"/>, which ends up with mode 0600.</summary>
    public static void WriteAllText(string path, string text)
    {
        Create(path);
        File.WriteAllText(path, text);
        if (!OperatingSystem.IsWindows())
        {
            File.SetUnixFileMode(path, FileMode);
        }
    }
}
