namespace Campaign.Core.Tracking;

/// <summary>POSIX signal numbers of the warning signals a batch system can send (Linux on x86-64 and arm64; signal(7)).</summary>
public static class Signals
{
    /// <summary>The number of signal <paramref name="name"/> ("USR1", "TERM" ...), or null when it is not one of the warning signals.</summary>
    public static int? Number(string name) => name switch
    {
        "HUP" => 1,
        "INT" => 2,
        "USR1" => 10,
        "USR2" => 12,
        "TERM" => 15,
        "URG" => 23,
        _ => null,
    };

    /// <summary>
    /// True when a job ended because of signal <paramref name="number"/>: the batch system reports the signal, or
    /// the shell's exit status 128 + number.
    /// </summary>
    public static bool EndedBy(int number, int? exitCode, int? signal) => signal == number || exitCode == 128 + number;
}
