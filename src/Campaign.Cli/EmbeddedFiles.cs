using System.Reflection;

namespace Campaign.Cli;

/// <summary>Files shipped inside the executable: cluster profiles, the demo campaign and templates.</summary>
internal static class EmbeddedFiles
{
    private static readonly Assembly Assembly = typeof(EmbeddedFiles).Assembly;

    /// <summary>File name to text of every embedded resource under <paramref name="prefix"/> ("profiles/", "demo/", "templates/").</summary>
    public static IReadOnlyDictionary<string, string> Under(string prefix)
    {
        var files = new SortedDictionary<string, string>(StringComparer.Ordinal);
        foreach (var name in Assembly.GetManifestResourceNames().Where(n => n.StartsWith(prefix, StringComparison.Ordinal)))
        {
            files[name[prefix.Length..]] = Read(name);
        }

        return files;
    }

    /// <summary>Text of one embedded resource.</summary>
    public static string Read(string name)
    {
        using var stream = Assembly.GetManifestResourceStream(name) ?? throw new InvalidOperationException($"Embedded file '{name}' is missing from this build.");
        using var reader = new StreamReader(stream);
        return reader.ReadToEnd();
    }
}
