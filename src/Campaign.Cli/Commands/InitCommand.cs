using System.CommandLine;
using Campaign.Cli.Output;
using Campaign.App.Workspaces;

namespace Campaign.Cli.Commands;

/// <summary>
/// campaign init [DIR] [--force]: creates a workspace from the built-in template: the local workstation profile
/// and a commented template for a cluster (the demo's invented clusters stay in the demo).
/// </summary>
internal static class InitCommand
{
    /// <summary>The profile a new workspace starts with: the local workstation.</summary>
    private const string LocalProfile = "workbench.toml";

    public static Command Build(CampaignApp app)
    {
        var folder = new Argument<string?>("DIR") { Description = "Folder to create the workspace in (default: --dir, else the current folder)", Arity = ArgumentArity.ZeroOrOne };
        var force = new Option<bool>("--force") { Description = "Write into a folder that is not empty: an existing campaign.db is kept and migrated, an existing campaign.toml or profile is kept and the template written beside it as NAME.new" };
        var command = new Command("init", "Create a workspace: campaign.toml, clusters/*.toml and campaign.db") { folder, force };
        app.Bind(command, context =>
        {
            var target = context.Parse.GetValue(folder) is { } given ? app.Resolve(given) : context.Workspace;
            var profiles = EmbeddedFiles.Under("profiles/").Where(p => p.Key == LocalProfile).ToDictionary(p => p.Key, p => p.Value);
            var examples = new Dictionary<string, string> { ["cluster.toml.example"] = EmbeddedFiles.Read("templates/cluster.toml.example") };
            var written = new WorkspaceAdmin(context.Time).Create(target, EmbeddedFiles.Read("templates/campaign.toml"), profiles, context.Parse.GetValue(force), examples).ToList();
            TrackingCommands.WriteLegScript(target);
            written.Add(Path.Combine(target, "run-leg.sh"));
            if (context.Json)
            {
                Json.Write(context.Out, new { Workspace = target, Files = written });
            }
            else
            {
                context.Out.WriteLine($"Created workspace {target}");
                foreach (var file in written)
                {
                    context.Out.WriteLine("  " + Path.GetRelativePath(target, file));
                }

                context.Out.WriteLine("Next: edit campaign.toml (name, clusters, allocations); for a cluster, copy clusters/cluster.toml.example to clusters/NAME.toml and fill it in; then check the workspace:");
                WrappingWriter.Unwrapped(context.Out).WriteLine($"  campaign --dir {target} check");
            }

            return ExitCodes.Ok;
        });
        return command;
    }
}
