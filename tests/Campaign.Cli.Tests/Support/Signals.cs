using System.Runtime.InteropServices;

namespace Campaign.Batch.Tests.Support;

/// <summary>Sends a POSIX signal to a process (for the payload's warning-signal test).</summary>
public static partial class Signals
{
    public static bool Send(int pid, int signal) => Kill(pid, signal) == 0;

    [LibraryImport("libc", EntryPoint = "kill")]
    private static partial int Kill(int pid, int signal);
}
