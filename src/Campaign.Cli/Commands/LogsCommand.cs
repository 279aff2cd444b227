using System.CommandLine;
using Campaign.Cli.Output;
using Campaign.Core.Configuration;
using Campaign.Core.Domain;
using Campaign.Store;

namespace Campaign.Cli.Commands;

/// <summary>campaign logs import FILE [--replace] | campaign logs list: the group's past runs.</summary>
internal static class LogsCommand
{
    /// <summary>Reads, validates and stores a run-log file; returns what was done and the runs now stored.</summary>
    public static (ImportResult Result, int Total) Import(Workspace workspace, string path, string shown, bool replace, TimeProvider time)
    {
        var rows = RunLogReader.Read(Campaign.Core.Text.StrictUtf8.Decode(File.ReadAllBytes(path), shown), shown, workspace.Config.Length, workspace.Machines.Keys.ToList());
        var result = RunLogStore.Import(workspace.Connection, rows, shown, replace, time);
        return (result, RunLogStore.All(workspace.Connection).Count);
    }

    public static Command Build(CampaignApp app)
    {
        var command = new Command("logs", "The group's past runs: import them from CSV, list them");

        var file = new Argument<string>("FILE") { Description = "Run-log file (CSV; columns in docs/formats.md)" };
        var replace = new Option<bool>("--replace") { Description = "Overwrite stored runs whose run_id the file repeats" };
        var import = new Command("import", "Import past runs from a CSV file (all or nothing, in one transaction)") { file, replace };
        app.Bind(import, context =>
        {
            var path = app.Resolve(context.Parse.GetValue(file)!);
            var shown = context.Parse.GetValue(file)!;
            if (!File.Exists(path))
            {
                throw new InvalidInputException(new[] { $"{shown}: no such file: expected a run-log file (CSV)" });
            }

            using var workspace = Workspace.Open(context.Workspace, context.Time);
            var (result, total) = Import(workspace, path, shown, context.Parse.GetValue(replace), context.Time);
            if (context.Json)
            {
                Json.Write(context.Out, new { File = shown, result.Added, result.Replaced, RunsInWorkspace = total });
            }
            else
            {
                context.Out.WriteLine($"Imported {shown}: {result.Added} runs added, {result.Replaced} replaced; {total} runs in the workspace.");
                context.Out.WriteLine("Next: campaign model fit");
            }

            return ExitCodes.Ok;
        });
        command.Add(import);

        var list = new Command("list", "List the stored runs");
        app.Bind(list, context =>
        {
            using var workspace = Workspace.Open(context.Workspace, context.Time);
            var logs = RunLogStore.All(workspace.Connection);
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
                        l.Machine,
                        l.WallHours,
                        CoreHours = l.ConsumedCoreHours,
                        ChargedCoreHours = l.CoreHours,
                        Outcome = l.Outcome.ToString().ToLowerInvariant(),
                        l.TEnd,
                    }),
                });
                return ExitCodes.Ok;
            }

            var table = new TextTable("run_id", "q", "chi_eff", "M*omega0", "level", "cores", "machine", "wall h", "core-h", "outcome");
            foreach (var l in logs)
            {
                table.Add(l.RunId, Format.Significant(l.Configuration.Q.Value), Format.Fixed(l.Configuration.ChiEffective, 3), Format.Fixed(l.Configuration.Omega0, 4),
                    Format.Integer(l.Level), Format.Integer(l.Cores), l.Machine, Format.Fixed(l.WallHours, 1), Format.Grouped(l.ConsumedCoreHours), l.Outcome.ToString().ToLowerInvariant());
            }

            table.WriteTo(context.Out);
            context.Out.WriteLine($"{logs.Count} runs.");
            return ExitCodes.Ok;
        });
        command.Add(list);
        return command;
    }
}
