using Campaign.Core.Configuration;
using Campaign.Core.Domain;

namespace Campaign.Store;

/// <summary>Loads the cluster profiles of a folder (one *.toml per cluster, named after the cluster).</summary>
public static class ClusterCatalog
{
    /// <summary>
    /// Reads every *.toml in <paramref name="folder"/>. Throws <see cref="InvalidInputException"/> listing the
    /// problems of every file, including a profile whose name differs from its file name.
    /// </summary>
    public static IReadOnlyDictionary<string, ClusterProfile> Load(string folder, string displayFolder)
    {
        var profiles = new SortedDictionary<string, ClusterProfile>(StringComparer.Ordinal);
        if (!Directory.Exists(folder))
        {
            return profiles;
        }

        var problems = new List<string>();
        foreach (var file in Directory.EnumerateFiles(folder, "*.toml").Order(StringComparer.Ordinal))
        {
            var display = Path.Combine(displayFolder, Path.GetFileName(file));
            try
            {
                var profile = ClusterProfileReader.Read(Campaign.Core.Text.StrictUtf8.Decode(File.ReadAllBytes(file), display), display);
                var expected = Path.GetFileNameWithoutExtension(file);
                if (profile.Name != expected)
                {
                    problems.Add($"{display}: name = \"{profile.Name}\": expected \"{expected}\", the file's name (one file per cluster, named after it)");
                    continue;
                }

                profiles[profile.Name] = profile;
            }
            catch (InvalidInputException e)
            {
                problems.AddRange(e.Problems);
            }
        }

        if (problems.Count > 0)
        {
            throw new InvalidInputException(problems);
        }

        return profiles;
    }
}
