using System.Globalization;
using System.Text;
using Campaign.Core.Domain;

namespace Campaign.Core.Text;

/// <summary>
/// Decodes an input file's bytes as UTF-8 (a byte-order mark is allowed and dropped) and refuses invalid bytes
/// with their location, instead of silently turning them into replacement characters.
/// </summary>
public static class StrictUtf8
{
    private static readonly UTF8Encoding Strict = new(encoderShouldEmitUTF8Identifier: false, throwOnInvalidBytes: true);

    /// <summary>The text of <paramref name="bytes"/>; <paramref name="source"/> names the file in messages.</summary>
    public static string Decode(byte[] bytes, string source)
    {
        var start = bytes.Length >= 3 && bytes[0] == 0xEF && bytes[1] == 0xBB && bytes[2] == 0xBF ? 3 : 0;
        try
        {
            return Strict.GetString(bytes, start, bytes.Length - start);
        }
        catch (DecoderFallbackException e)
        {
            var offset = start + Math.Max(0, e.Index);
            var line = 1;
            var lineStart = 0;
            for (var i = 0; i < offset && i < bytes.Length; i++)
            {
                if (bytes[i] == (byte)'\n')
                {
                    line++;
                    lineStart = i + 1;
                }
            }

            var column = Encoding.UTF8.GetCharCount(bytes, lineStart, Math.Max(0, offset - lineStart)) + 1;
            var shown = e.BytesUnknown is { Length: > 0 } unknown ? "0x" + Convert.ToHexString(unknown) : "?";
            throw new InvalidInputException(new[]
            {
                $"{source}:{line.ToString(CultureInfo.InvariantCulture)}:{column.ToString(CultureInfo.InvariantCulture)}: byte {shown} is not valid UTF-8: expected a UTF-8 (or ASCII) text file",
            });
        }
    }
}
