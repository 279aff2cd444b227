using System.CommandLine;
using Campaign.Cli.Output;
using Campaign.App.Workspaces;

namespace Campaign.Cli.Commands;

/// <summary>campaign backup DEST: a consistent copy of the workspace's database, config and profiles.</summary>
internal static class BackupCommand
{
    public static Command Build(CampaignApp app)
    {
        var destination = new Argument<string>("DEST") { Description = "A new (or empty) folder for the copy" };
        var command = new Command("backup", "Copy the workspace's database (a consistent snapshot, safe while the daemon runs), config and cluster profiles") { destination };
        app.Bind(command, context =>
        {
            var result = new WorkspaceAdmin(context.Time).Backup(context.Workspace, app.Resolve(context.Parse.GetValue(destination)!));
            if (context.Json)
            {
                Json.Write(context.Out, new { result.Destination, result.Files, result.DatabaseBytes, result.Integrity });
            }
            else
            {
                context.Out.WriteLine($"Backup of {result.Workspace} in {result.Destination}: {string.Join(", ", result.Files)}; database {Format.Integer(result.DatabaseBytes)} bytes, integrity {result.Integrity}.");
                context.Out.WriteLine("Run folders (checkpoints, output) are not in it: keep them on storage your site backs up.");
                context.Out.WriteLine($"To restore: stop the daemon, then copy the folder's files over the workspace (or use it as the workspace with --dir).");
            }

            return result.Integrity == "ok" ? ExitCodes.Ok : ExitCodes.RuntimeFailure;
        });
        return command;
    }
}
