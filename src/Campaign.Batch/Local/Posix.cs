using System.Globalization;
using System.Runtime.InteropServices;

namespace Campaign.Batch.Local;

/// <summary>The few POSIX calls the local runner needs: signals to process groups and process identity.</summary>
internal static partial class Posix
{
    /// <summary>Linux signal numbers by name (x86-64 and arm64 agree on these).</summary>
    public static readonly IReadOnlyDictionary<string, int> Signals = new Dictionary<string, int>(StringComparer.Ordinal)
    {
        ["HUP"] = 1, ["INT"] = 2, ["KILL"] = 9, ["USR1"] = 10, ["USR2"] = 12, ["TERM"] = 15, ["URG"] = 23,
    };

    /// <summary>Sends <paramref name="signal"/> to every process of the group led by <paramref name="leader"/>; false if none is left.</summary>
    public static bool SignalGroup(int leader, int signal) => Kill(-leader, signal) == 0;

    /// <summary>Sends <paramref name="signal"/> to one process; false if it is gone.</summary>
    public static bool SignalProcess(int pid, int signal) => Kill(pid, signal) == 0;

    /// <summary>
    /// The start time of a process in clock ticks since boot (field 22 of /proc/PID/stat), or null when there is
    /// no such process. A pid with the same start time is the same process, even after pid reuse.
    /// </summary>
    public static long? StartTicks(int pid)
    {
        string stat;
        try
        {
            stat = File.ReadAllText($"/proc/{pid.ToString(CultureInfo.InvariantCulture)}/stat");
        }
        catch (IOException)
        {
            return null;
        }
        catch (UnauthorizedAccessException)
        {
            return null;
        }

        // The command name (field 2) is in parentheses and may hold spaces: count fields after the last ')'.
        var after = stat[(stat.LastIndexOf(')') + 1)..].Split(' ', StringSplitOptions.RemoveEmptyEntries);
        if (after.Length > 19 && after[0] == "Z")
        {
            return null; // a zombie has exited
        }

        return after.Length > 19 && long.TryParse(after[19], NumberStyles.None, CultureInfo.InvariantCulture, out var ticks) ? ticks : null;
    }

    /// <summary>True when the process recorded as (<paramref name="pid"/>, <paramref name="ticks"/>) still runs.</summary>
    public static bool IsAlive(int pid, long ticks) => StartTicks(pid) == ticks;

    [LibraryImport("libc", EntryPoint = "kill", SetLastError = true)]
    private static partial int Kill(int pid, int signal);
}
