using Campaign.Core.Configuration;
using Campaign.Core.Domain;
using Dapper;

namespace Campaign.Store;

/// <summary>What a new workspace is made of: the config text and the cluster profiles to copy in.</summary>
/// <param name="ConfigText">Text of campaign.toml.</param>
/// <param name="Profiles">File name to TOML text of each cluster profile.</param>
/// <param name="Examples">File name to text of files written beside the profiles as they are (templates that are
/// not profiles yet, such as a commented cluster.toml.example).</param>
public sealed record WorkspaceTemplate(string ConfigText, IReadOnlyDictionary<string, string> Profiles, IReadOnlyDictionary<string, string>? Examples = null);

/// <summary>Creates workspaces.</summary>
public static class WorkspaceCreator
{
    /// <summary>
    /// Writes campaign.toml and clusters/*.toml into <paramref name="root"/> and creates campaign.db. A folder
    /// that already has files is refused unless <paramref name="force"/>; even then nothing the user has is
    /// replaced: an existing campaign.db is kept (its history is never thrown away) and only migrated, and an
    /// existing campaign.toml or cluster profile is kept with the template written beside it as NAME.new. The
    /// template is validated before anything is written.
    /// </summary>
    public static IReadOnlyList<string> Create(string root, WorkspaceTemplate template, bool force, TimeProvider time)
    {
        root = Path.GetFullPath(root);
        if (Directory.Exists(root) && Directory.EnumerateFileSystemEntries(root).Any() && !force)
        {
            throw new InvalidInputException(new[] { $"{root}: the folder is not empty: expected an empty or new folder (use --force to write the config and profiles there; an existing {Workspace.DatabaseFileName} is kept)" });
        }

        var problems = new List<string>();
        var names = new List<string>();
        foreach (var (file, text) in template.Profiles)
        {
            try
            {
                names.Add(ClusterProfileReader.Read(text, Path.Combine(Workspace.ClustersFolderName, file)).Name);
            }
            catch (InvalidInputException e)
            {
                problems.AddRange(e.Problems);
            }
        }

        WorkspaceConfig? config = null;
        try
        {
            config = WorkspaceConfigReader.Read(template.ConfigText, Workspace.ConfigFileName, names);
        }
        catch (InvalidInputException e)
        {
            problems.AddRange(e.Problems);
        }

        if (problems.Count > 0)
        {
            throw new InvalidInputException(problems);
        }

        // A file the user already has is never overwritten: the template goes beside it as NAME.new.
        var written = new List<string>();
        Directory.CreateDirectory(Workspace.PathOf(root, Workspace.ClustersFolderName));
        foreach (var (file, text) in template.Profiles)
        {
            var path = Beside(Path.Combine(root, Workspace.ClustersFolderName, file));
            File.WriteAllText(path, text);
            written.Add(path);
        }

        foreach (var (file, text) in template.Examples ?? new Dictionary<string, string>())
        {
            var path = Beside(Path.Combine(root, Workspace.ClustersFolderName, file));
            File.WriteAllText(path, text);
            written.Add(path);
        }

        var configPath = Beside(Workspace.PathOf(root, Workspace.ConfigFileName));
        var keptConfig = configPath != Workspace.PathOf(root, Workspace.ConfigFileName);
        OwnerOnly.WriteAllText(configPath, template.ConfigText);
        written.Add(configPath);

        var databasePath = Workspace.PathOf(root, Workspace.DatabaseFileName);
        using var connection = CampaignDatabase.Open(databasePath, time);
        using var transaction = connection.BeginTransaction();
        if (!keptConfig)
        {
            connection.Execute(
                "INSERT INTO workspace_info (key, value) VALUES ('name', @Name) ON CONFLICT (key) DO UPDATE SET value = excluded.value",
                new { config!.Name },
                transaction);
        }

        connection.Execute(
            "INSERT INTO workspace_info (key, value) VALUES ('created_at', @At) ON CONFLICT (key) DO NOTHING",
            new { At = time.GetUtcNow().ToString("O", System.Globalization.CultureInfo.InvariantCulture) },
            transaction);
        EventLog.Append(connection, transaction, time, "workspace.init", null, $"config and {template.Profiles.Count} cluster profiles written");
        transaction.Commit();
        written.Add(databasePath);
        return written;
    }

    /// <summary>The path to write a template file to: the path itself when free, else PATH.new beside the user's file.</summary>
    private static string Beside(string path) => File.Exists(path) ? path + ".new" : path;
}
