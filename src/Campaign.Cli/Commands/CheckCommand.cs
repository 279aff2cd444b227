using System.CommandLine;
using Campaign.Cli.Output;
using Campaign.App.Workspaces;

namespace Campaign.Cli.Commands;

/// <summary>campaign check: validates the workspace (config, profiles, database) and summarises it.</summary>
internal static class CheckCommand
{
    public static Command Build(CampaignApp app)
    {
        var command = new Command("check", "Validate the workspace (config, cluster profiles, database) and summarise it");
        app.Bind(command, context =>
        {
            var workspace = new WorkspaceAdmin(context.Time).Check(context.Workspace);
            var config = workspace.Config;
            var schema = workspace.SchemaVersion;
            var integrity = workspace.Integrity;
            var allocations = config.Allocations.Select(a => new
            {
                a.Cluster,
                a.Amount,
                Unit = a.UnitName,
                CoreHours = a.CoreHours(workspace.Clusters[a.Cluster]),
                Start = a.Start.ToString("yyyy-MM-dd", System.Globalization.CultureInfo.InvariantCulture),
                End = a.End.ToString("yyyy-MM-dd", System.Globalization.CultureInfo.InvariantCulture),
                Windows = a.Windows.Select(w => new
                {
                    Start = w.Start.ToString("yyyy-MM-dd", System.Globalization.CultureInfo.InvariantCulture),
                    End = w.End.ToString("yyyy-MM-dd", System.Globalization.CultureInfo.InvariantCulture),
                    w.Amount,
                }).ToList(),
            }).ToList();
            if (context.Json)
            {
                Json.Write(context.Out, new
                {
                    Workspace = workspace.Root,
                    config.Name,
                    config.Clusters,
                    config.DefaultCluster,
                    Allocations = allocations,
                    DefaultLevels = config.Defaults.Levels,
                    DefaultCores = config.Defaults.Cores,
                    SchemaVersion = schema,
                    Integrity = integrity,
                    config.Notices,
                });
                return ExitCodes.Ok;
            }

            context.Out.WriteLine($"Workspace {workspace.Root}: ok");
            context.Out.WriteLine($"  campaign        {config.Name}");
            context.Out.WriteLine($"  clusters        {string.Join(", ", config.Clusters)} (default {config.DefaultCluster})");
            context.Out.WriteLine($"  default levels  {string.Join(", ", config.Defaults.Levels)}; cores {(config.Defaults.Cores is { } c ? Format.Integer(c) : "(per candidate)")}");
            context.Out.WriteLine($"  database        schema version {schema}, integrity {integrity}");
            foreach (var notice in config.Notices)
            {
                context.Out.WriteLine($"  note: {notice}");
            }

            if (allocations.Count == 0)
            {
                context.Out.WriteLine("  allocations     none configured");
                return ExitCodes.Ok;
            }

            context.Out.WriteLine();
            var table = new TextTable("cluster", "period", "amount", "unit", "core-hours", "windows");
            foreach (var a in allocations)
            {
                table.Add(a.Cluster, a.Start + " .. " + a.End, Format.Grouped(a.Amount), a.Unit, Format.Grouped(a.CoreHours), Format.Integer(a.Windows.Count));
            }

            table.WriteTo(context.Out);
            context.Out.WriteLine("Allocations as written in campaign.toml; the site's own accounting is what counts.");
            return ExitCodes.Ok;
        });
        return command;
    }
}
