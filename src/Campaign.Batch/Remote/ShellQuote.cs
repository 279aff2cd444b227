using System.Text;

namespace Campaign.Batch.Remote;

/// <summary>
/// The one way an argument reaches a remote POSIX shell (what ssh hands its command line to): each word in single
/// quotes, a single quote inside written as '\'', so the shell takes every word literally: no expansion, no
/// globbing, no command substitution, whatever the run id or path holds. A NUL character cannot be passed at all
/// and is refused.
/// </summary>
public static class ShellQuote
{
    /// <summary>One word, quoted for a POSIX shell.</summary>
    public static string Word(string word)
    {
        if (word.Contains('\0', StringComparison.Ordinal))
        {
            throw new ArgumentException("A NUL character cannot be passed to a shell.", nameof(word));
        }

        return "'" + word.Replace("'", "'\\''", StringComparison.Ordinal) + "'";
    }

    /// <summary>A command line of <paramref name="words"/>, each quoted: the program and its arguments, nothing else.</summary>
    public static string Command(IEnumerable<string> words)
    {
        var line = new StringBuilder();
        foreach (var word in words)
        {
            if (line.Length > 0)
            {
                line.Append(' ');
            }

            line.Append(Word(word));
        }

        return line.ToString();
    }

    /// <summary>
    /// A command for a person to copy: words made only of characters no shell treats specially stay bare, the others
    /// are quoted as by <see cref="Word"/>.
    /// </summary>
    public static string Display(IEnumerable<string> words) =>
        string.Join(" ", words.Select(w => w.Length > 0 && w.All(c => char.IsAsciiLetterOrDigit(c) || "_./=:@%+,-".Contains(c, StringComparison.Ordinal)) ? w : Word(w)));
}
