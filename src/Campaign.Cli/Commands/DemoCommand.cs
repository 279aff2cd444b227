using System.CommandLine;
using System.Globalization;
using Campaign.Cli.Output;
using Campaign.Store;

namespace Campaign.Cli.Commands;

/// <summary>
/// campaign demo [DIR]: the quick start. Creates a workspace of the invented demo group (config, machine
/// profiles, candidate configurations) and runs the planning job that exists so far on it: the run length and
/// remnant physics of every candidate. Later steps of the demo grow here as the tool grows.
/// </summary>
internal static class DemoCommand
{
    public static Command Build(CampaignApp app)
    {
        var folder = new Argument<string?>("DIR") { Description = "Folder for the demo workspace (default: a new folder under the system's temporary folder)", Arity = ArgumentArity.ZeroOrOne };
        var force = new Option<bool>("--force") { Description = "Write into a folder that is not empty" };
        var command = new Command("demo", "Create the demo workspace (an invented group) and run the planning job on it") { folder, force };
        app.Bind(command, context =>
        {
            var target = context.Parse.GetValue(folder) is { } given
                ? app.Resolve(given)
                : Path.Combine(Path.GetTempPath(), "campaign-demo-" + context.Time.GetUtcNow().ToString("yyyyMMdd-HHmmss", CultureInfo.InvariantCulture));
            var demo = EmbeddedFiles.Under("demo/");
            var template = new WorkspaceTemplate(demo["campaign.toml"], EmbeddedFiles.Under("profiles/"));
            var log = context.Json ? TextWriter.Null : context.Out;
            WorkspaceCreator.Create(target, template, context.Parse.GetValue(force), context.Time);
            var candidatesPath = Path.Combine(target, "candidates.csv");
            File.WriteAllText(candidatesPath, demo["candidates.csv"]);
            log.WriteLine($"Demo workspace: {target}");
            log.WriteLine("  campaign.toml, machines/*.toml, campaign.db, candidates.csv (an invented group's planned runs)");
            log.WriteLine();

            var (config, machines) = Workspace.ReadSettings(target);
            var rows = LengthCommand.ForFile(candidatesPath, "candidates.csv", context, config.Length, config.Defaults, config.DefaultMachine, machines.Keys.ToList());
            if (context.Json)
            {
                Json.Write(context.Out, new { Workspace = target, Candidates = "candidates.csv", config.Length, Runs = rows });
                return ExitCodes.Ok;
            }

            log.WriteLine($"Run lengths of the {rows.Count} demo candidates ({config.Name}):");
            LengthRow.WriteTable(log, rows);
            log.WriteLine();
            log.WriteLine("Explore it:");
            log.WriteLine($"  ./campaign --dir {target} check");
            log.WriteLine($"  ./campaign --dir {target} machines");
            log.WriteLine($"  ./campaign --dir {target} length --q 4 --chi1z 0.5 --omega0 0.016");
            return ExitCodes.Ok;
        });
        return command;
    }
}
