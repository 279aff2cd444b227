using System.CommandLine;
using Campaign.Cli.Output;
using Campaign.App.Logs;

namespace Campaign.Cli.Commands;

/// <summary>campaign logs import FILE [--replace] | campaign logs list: the group's past runs.</summary>
internal static class LogsCommand
{
    public static Command Build(CampaignApp app)
    {
        var command = new Command("logs", "The group's past runs: import them from CSV, list them");

        var file = new Argument<string>("FILE") { Description = "Run-log file (CSV; columns in docs/formats.md)" };
        var replace = new Option<bool>("--replace") { Description = "Overwrite stored runs whose run_id the file repeats" };
        var import = new Command("import", "Import past runs from a CSV file (all or nothing, in one transaction)") { file, replace };
        app.Bind(import, context =>
        {
            var shown = context.Parse.GetValue(file)!;
            var result = new RunLogService(context.Time).Import(new ImportLogsRequest(context.Workspace, app.Resolve(shown), shown, context.Parse.GetValue(replace)));
            var total = result.Total;
            if (context.Json)
            {
                Json.Write(context.Out, new { File = shown, result.Added, result.Replaced, RunsInWorkspace = total });
            }
            else
            {
                context.Out.WriteLine($"Imported {shown}: {Format.Count(result.Added, "run")} added, {Format.Integer(result.Replaced)} replaced; {Format.Count(total, "run")} in the workspace.");
                context.Out.WriteLine("Next: campaign model fit");
            }

            return ExitCodes.Ok;
        });
        command.Add(import);

        var list = new Command("list", "List the stored runs");
        app.Bind(list, context =>
        {
            var logs = new RunLogService(context.Time).List(context.Workspace);
            if (context.Json)
            {
                Json.Write(context.Out, new
                {
                    Runs = logs.Select(l => new
                    {
                        l.RunId,
                        Q = l.Configuration.Q.Value,
                        Chi1 = new[] { l.Configuration.Chi1.X, l.Configuration.Chi1.Y, l.Configuration.Chi1.Z },
                        Chi2 = new[] { l.Configuration.Chi2.X, l.Configuration.Chi2.Y, l.Configuration.Chi2.Z },
                        l.Configuration.Omega0,
                        l.Level,
                        l.Cores,
                        l.Cluster,
                        l.WallHours,
                        CoreHours = l.ConsumedCoreHours,
                        ChargedCoreHours = l.CoreHours,
                        Outcome = l.Outcome.ToString().ToLowerInvariant(),
                        l.TEnd,
                    }),
                });
                return ExitCodes.Ok;
            }

            var table = new TextTable("run_id", "q", "chi_eff", "M*omega0", "level", "cores", "cluster", "wall h", "core-h", "outcome");
            foreach (var l in logs)
            {
                table.Add(l.RunId, Format.Significant(l.Configuration.Q.Value), Format.Fixed(l.Configuration.ChiEffective, 3), Format.Fixed(l.Configuration.Omega0, 4),
                    Format.Integer(l.Level), Format.Integer(l.Cores), l.Cluster, Format.Fixed(l.WallHours, 1), Format.Grouped(l.ConsumedCoreHours), l.Outcome.ToString().ToLowerInvariant());
            }

            table.WriteTo(context.Out);
            context.Out.WriteLine($"{Format.Count(logs.Count, "run")}.");
            return ExitCodes.Ok;
        });
        command.Add(list);
        return command;
    }
}
