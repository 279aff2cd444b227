using Campaign.Core.Domain;
using Dapper;

namespace Campaign.Store.Tests;

public class WorkspaceTests
{
    private const string Profile = """
        name = "box"
        batch_system = "local"
        cores_per_node = 8
        memory_per_node_gb = 32
        wall_limit_hours = 4
        charge_whole_nodes = false
        """;

    private const string Config = """
        [campaign]
        name = "Test"
        clusters = ["box"]
        """;

    private static WorkspaceTemplate Template(string config = Config, string profile = Profile) =>
        new(config, new Dictionary<string, string> { ["box.toml"] = profile });

    [Fact]
    public void Init_writes_config_profiles_and_database_and_open_reads_them_back()
    {
        using var folder = new TempFolder();
        var root = Path.Combine(folder.Path, "ws");
        var written = WorkspaceCreator.Create(root, Template(), force: false, FixedTime.Default);
        Assert.Equal(3, written.Count);
        using var workspace = Workspace.Open(root, FixedTime.Default);
        Assert.Equal("Test", workspace.Config.Name);
        Assert.Equal(8, workspace.Cluster("box").CoresPerNode);
        Assert.Equal("Test", workspace.Connection.ExecuteScalar<string>("SELECT value FROM workspace_info WHERE key = 'name'"));
        var events = EventLog.Recent(workspace.Connection, 10);
        Assert.Equal("workspace.init", Assert.Single(events).Kind);
    }

    [Fact]
    public void Init_refuses_a_folder_that_is_not_empty_and_writes_nothing()
    {
        using var folder = new TempFolder();
        File.WriteAllText(folder.File("notes.txt"), "mine");
        var error = Assert.Throws<InvalidInputException>(() => WorkspaceCreator.Create(folder.Path, Template(), force: false, FixedTime.Default));
        Assert.Equal($"{folder.Path}: the folder is not empty: expected an empty or new folder (use --force to write the config and profiles there; an existing campaign.db is kept)", error.Message);
        Assert.Equal(new[] { folder.File("notes.txt") }, Directory.EnumerateFileSystemEntries(folder.Path));
    }

    [Fact]
    public void Init_with_force_keeps_the_existing_database_history()
    {
        using var folder = new TempFolder();
        WorkspaceCreator.Create(folder.Path, Template(), force: false, FixedTime.Default);
        WorkspaceCreator.Create(folder.Path, Template(), force: true, FixedTime.Default);
        using var workspace = Workspace.Open(folder.Path, FixedTime.Default);
        Assert.Equal(2, EventLog.Recent(workspace.Connection, 10).Count);
    }

    [Fact]
    public void A_bad_template_writes_nothing()
    {
        using var folder = new TempFolder();
        var root = Path.Combine(folder.Path, "ws");
        var error = Assert.Throws<InvalidInputException>(() => WorkspaceCreator.Create(root, Template(profile: Profile.Replace("cores_per_node = 8", "cores_per_node = -8", StringComparison.Ordinal)), false, FixedTime.Default));
        Assert.Equal(new[] { "clusters/box.toml:3:18: cores_per_node = -8: expected an integer from 1 to 100000", "campaign.toml:3:12: campaign.clusters = [\"box\"]: expected cluster names with a profile; \"box\" has none (known: (no cluster profiles found))" }, error.Problems);
        Assert.False(Directory.Exists(root));
    }

    [Fact]
    public void A_profile_whose_name_differs_from_its_file_is_refused()
    {
        using var folder = new TempFolder();
        WorkspaceCreator.Create(folder.Path, Template(), false, FixedTime.Default);
        File.WriteAllText(Path.Combine(folder.Path, "clusters", "other.toml"), Profile);
        var error = Assert.Throws<InvalidInputException>(() => Workspace.Open(folder.Path, FixedTime.Default));
        Assert.Equal($"{Path.Combine(folder.Path, "clusters", "other.toml")}: name = \"box\": expected \"other\", the file's name (one file per cluster, named after it)", error.Message);
    }

    [Fact]
    public void A_folder_without_config_is_not_a_workspace()
    {
        using var folder = new TempFolder();
        var error = Assert.Throws<InvalidInputException>(() => Workspace.Open(folder.Path, FixedTime.Default));
        Assert.Equal($"{folder.Path}: not a campaign workspace (no campaign.toml): expected a folder made by 'campaign init DIR', or give one with --dir", error.Message);
        Assert.False(File.Exists(folder.File("campaign.db")));
    }

    [Fact]
    public void A_bad_config_leaves_the_database_untouched()
    {
        using var folder = new TempFolder();
        WorkspaceCreator.Create(folder.Path, Template(), false, FixedTime.Default);
        var db = folder.File("campaign.db");
        var before = File.GetLastWriteTimeUtc(db);
        var length = new FileInfo(db).Length;
        File.WriteAllText(folder.File("campaign.toml"), Config.Replace("\"box\"", "\"nope\"", StringComparison.Ordinal));
        Assert.Throws<InvalidInputException>(() => Workspace.Open(folder.Path, FixedTime.Default));
        Assert.Equal(before, File.GetLastWriteTimeUtc(db));
        Assert.Equal(length, new FileInfo(db).Length);
    }

    [Fact]
    public void Init_with_force_never_overwrites_the_users_config_or_profiles_and_writes_the_template_beside_them()
    {
        // Regression (faults issue, item 13): --force replaced campaign.toml (allocations, [tracking]) with the template.
        using var folder = new TempFolder();
        WorkspaceCreator.Create(folder.Path, Template(), force: false, FixedTime.Default);
        var edited = Config.Replace("name = \"Test\"", "name = \"Our real campaign\"", StringComparison.Ordinal) + "\n[tracking]\nstall_minutes = 300\n";
        File.WriteAllText(folder.File("campaign.toml"), edited);
        var profile = Profile + "\ncharge_factor = 1.5\n";
        File.WriteAllText(Path.Combine(folder.Path, "clusters", "box.toml"), profile);

        var written = WorkspaceCreator.Create(folder.Path, Template(), force: true, FixedTime.Default);

        Assert.Equal(edited, File.ReadAllText(folder.File("campaign.toml")));
        Assert.Equal(profile, File.ReadAllText(Path.Combine(folder.Path, "clusters", "box.toml")));
        Assert.Equal(Config, File.ReadAllText(folder.File("campaign.toml.new")));
        Assert.Contains(folder.File("campaign.toml.new"), written);
        Assert.Contains(Path.Combine(folder.Path, "clusters", "box.toml.new"), written);
        using var workspace = Workspace.Open(folder.Path, FixedTime.Default);
        Assert.Equal("Our real campaign", workspace.Config.Name);
        Assert.Equal(1.5, workspace.Cluster("box").ChargeFactor);
    }
}
