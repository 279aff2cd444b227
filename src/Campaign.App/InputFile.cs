using System.Globalization;
using Campaign.Core.Domain;
using Campaign.Core.Text;

namespace Campaign.App;

/// <summary>
/// Reading an input file the user names (candidates, run logs): it must be a regular file of a sane size. A
/// directory, a device or a pipe (say /dev/zero) is refused with a clear message before anything is read whole.
/// </summary>
public static class InputFile
{
    /// <summary>The largest input file read (a million candidate rows take about 100 MB).</summary>
    public const long MaximumBytes = 512L * 1024 * 1024;

    /// <summary>The text of <paramref name="path"/>, decoded strictly as UTF-8; <paramref name="expected"/> says what it should be.</summary>
    public static string Read(string path, string shown, string expected)
    {
        if (Directory.Exists(path))
        {
            throw new InvalidInputException(new[] { $"{shown}: is a directory: expected {expected}" });
        }

        if (!File.Exists(path))
        {
            throw new InvalidInputException(new[] { $"{shown}: no such file: expected {expected}" });
        }

        var size = new FileInfo(path).Length;
        if (size > MaximumBytes)
        {
            throw new InvalidInputException(new[] { $"{shown}: {size.ToString("N0", CultureInfo.InvariantCulture)} bytes: expected {expected} of at most {MaximumBytes.ToString("N0", CultureInfo.InvariantCulture)} bytes" });
        }

        // A device or a pipe says it is empty (or any size) and then gives more: read one byte past the size it states.
        var buffer = new byte[size + 1];
        int read = 0, n;
        using (var stream = new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.ReadWrite, 1, FileOptions.SequentialScan))
        {
            while (read < buffer.Length && (n = stream.Read(buffer, read, buffer.Length - read)) > 0)
            {
                read += n;
            }
        }

        if (read > size)
        {
            throw new InvalidInputException(new[] { $"{shown}: not a regular file (a device or a pipe gives more than the {size.ToString(CultureInfo.InvariantCulture)} bytes it states): expected {expected}" });
        }

        return StrictUtf8.Decode(buffer.AsSpan(0, read).ToArray(), shown);
    }
}
