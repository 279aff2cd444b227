using Campaign.Core.Configuration;
using Campaign.Core.Domain;
using Campaign.Core.Physics;
using Campaign.Core.Text;

namespace Campaign.App.Lengths;

/// <summary>Reading a candidate file for the run-length calculator (no workspace needed).</summary>
public static class CandidateFile
{
    /// <summary>The configurations of a candidate file, read with the given settings; a clear error when it is missing.</summary>
    public static IReadOnlyList<(string Id, BinaryConfiguration Configuration)> Read(string path, string shown, LengthSettings length, RunDefaults defaults, string defaultCluster, IReadOnlyCollection<string> clusters)
    {
        return CandidateReader.Read(InputFile.Read(path, shown, "a candidate file (CSV)"), shown, length, defaults, defaultCluster, clusters)
            .Select(c => (c.Id, c.Spec.Configuration))
            .ToList();
    }
}
