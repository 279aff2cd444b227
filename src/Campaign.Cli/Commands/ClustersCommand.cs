using System.CommandLine;
using Campaign.Cli.Output;
using Campaign.Core.Configuration;
using Campaign.Core.Domain;
using Campaign.App.Workspaces;

namespace Campaign.Cli.Commands;

/// <summary>campaign clusters [check FILE...]: lists cluster profiles, or validates profile files.</summary>
internal static class ClustersCommand
{
    public static Command Build(CampaignApp app)
    {
        var command = new Command("clusters", "List the cluster profiles of the workspace (the built-in ones outside a workspace)");
        app.Bind(command, context =>
        {
            var profiles = WorkspaceAdmin.Exists(context.Workspace)
                ? WorkspaceAdmin.Settings(context.Workspace).Clusters.Values.ToList()
                : EmbeddedFiles.Under("profiles/").Select(p => ClusterProfileReader.Read(p.Value, p.Key)).ToList();
            Write(context, profiles);
            return ExitCodes.Ok;
        });

        var files = new Argument<string[]>("FILE") { Description = "Cluster profile files (TOML) to validate", Arity = ArgumentArity.OneOrMore };
        var check = new Command("check", "Validate cluster profile files and show what they say") { files };
        app.Bind(check, context =>
        {
            var problems = new List<string>();
            var profiles = new List<ClusterProfile>();
            foreach (var file in context.Parse.GetValue(files) ?? Array.Empty<string>())
            {
                var path = app.Resolve(file);
                if (!File.Exists(path))
                {
                    problems.Add($"{file}: no such file: expected a cluster profile (TOML)");
                    continue;
                }

                try
                {
                    profiles.Add(ClusterProfileReader.Read(Campaign.Core.Text.StrictUtf8.Decode(File.ReadAllBytes(path), file), file));
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

            Write(context, profiles);
            return ExitCodes.Ok;
        });
        command.Add(check);
        return command;
    }

    private static void Write(CommandContext context, IReadOnlyList<ClusterProfile> profiles)
    {
        if (context.Json)
        {
            Json.Write(context.Out, new { Clusters = profiles });
            return;
        }

        var table = new TextTable("cluster", "batch", "cores/node", "GB/node", "wall h", "charged as", "factor", "speed", "jobs q/run", "queue wait h");
        foreach (var p in profiles)
        {
            table.Add(
                p.Name,
                p.BatchSystem.ToString().ToLowerInvariant(),
                Format.Integer(p.CoresPerNode),
                Format.Significant(p.MemoryPerNodeGb),
                Format.Significant(p.WallLimitHours),
                p.ChargeWholeNodes ? "whole nodes" : "cores",
                Format.Significant(p.ChargeFactor),
                Format.Significant(p.RelativeSpeed),
                Format.Integer(p.MaxJobsQueued) + "/" + Format.Integer(p.MaxJobsRunning),
                Format.Significant(p.QueueWaitMedianHours) + " (p90 " + Format.Significant(p.QueueWaitP90Hours) + ")");
        }

        table.WriteTo(context.Out);
    }
}
