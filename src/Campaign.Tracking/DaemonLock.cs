using System.Globalization;

namespace Campaign.Tracking;

/// <summary>
/// The one-actor-per-workspace lock: an exclusive lock on daemon.lock in the workspace, held by the process
/// for as long as it acts. The operating system drops it when the process dies, however it dies, so a crashed
/// daemon never blocks the next one. The file holds the holder's pid, for messages.
/// </summary>
public sealed class DaemonLock : IDisposable
{
    private readonly FileStream _stream;

    private DaemonLock(FileStream stream) => _stream = stream;

    /// <summary>Takes the lock, or returns null and who holds it.</summary>
    public static DaemonLock? TryTake(string workspace, out string holder)
    {
        var path = Path.Combine(workspace, "daemon.lock");
        try
        {
            var stream = new FileStream(path, FileMode.OpenOrCreate, FileAccess.ReadWrite, FileShare.None);
            stream.SetLength(0);
            var pid = Environment.ProcessId.ToString(CultureInfo.InvariantCulture);
            stream.Write(System.Text.Encoding.ASCII.GetBytes(pid));
            stream.Flush(flushToDisk: true);
            holder = pid;
            return new DaemonLock(stream);
        }
        catch (IOException)
        {
            try
            {
                holder = "pid " + File.ReadAllText(path).Trim();
            }
            catch (IOException)
            {
                holder = "another process";
            }

            return null;
        }
    }

    /// <inheritdoc />
    public void Dispose() => _stream.Dispose();
}
