using System.Globalization;
using System.Security.Cryptography;
using System.Text;
using System.Text.RegularExpressions;

namespace Campaign.Batch;

/// <summary>
/// Job names that carry the workspace, the run id and the leg number and are safe for every batch system:
/// "cmp.WORKSPACE.RUNID.legNNN", at most 64 characters, made of letters, digits, '.', '-' and '_' only, so no quoting
/// is ever needed. The workspace id keeps two workspaces of one user apart in one queue. The mapping is one to one:
/// run ids (letters, digits, '.', '-', '_') are kept as they are, and an id too long for the room left keeps its
/// start and ends in a hash of the whole id, so two runs never share a job name.
/// </summary>
public static partial class JobName
{
    /// <summary>What a valid name looks like, for messages.</summary>
    public const string Rule = "1 to 64 characters: letters, digits, '.', '-' or '_'";

    /// <summary>The name of leg <paramref name="leg"/> of run <paramref name="runId"/> of workspace <paramref name="workspaceId"/>.</summary>
    public static string For(string workspaceId, string runId, int leg) => Build(workspaceId, runId, ".leg" + leg.ToString("D3", CultureInfo.InvariantCulture));

    /// <summary>
    /// The name that workspaces before schema version 9 gave leg <paramref name="leg"/> of the run then called
    /// <paramref name="formerRunId"/>: looked up beside the current name after an upgrade, so a job submitted before
    /// it is found and never submitted again.
    /// </summary>
    public static string Former(string workspaceId, string formerRunId, int leg) => Build(workspaceId, formerRunId, ".s" + leg.ToString("D3", CultureInfo.InvariantCulture));

    private static string Build(string workspaceId, string runId, string suffix)
    {
        var clean = new StringBuilder();
        foreach (var c in runId)
        {
            clean.Append(char.IsAsciiLetterOrDigit(c) || c is '-' or '_' or '.' ? c : '_');
        }

        var prefix = "cmp." + (workspaceId.Length > 0 ? workspaceId + "." : "");
        var room = 64 - prefix.Length - suffix.Length;
        var id = clean.ToString();
        if (id.Length > room || id != runId)
        {
            // Too long, or with characters a job name cannot carry: keep a readable start, add a hash of the whole id.
            var hash = Convert.ToHexStringLower(SHA256.HashData(Encoding.UTF8.GetBytes(runId)))[..10];
            id = id[..Math.Min(id.Length, room - hash.Length - 1)] + "-" + hash;
        }

        return prefix + id + suffix;
    }

    /// <summary>True when <paramref name="name"/> needs no quoting anywhere.</summary>
    public static bool IsValid(string name) => SafeName().IsMatch(name);

    [GeneratedRegex("^[A-Za-z0-9._-]{1,64}\\z")]
    private static partial Regex SafeName();
}
