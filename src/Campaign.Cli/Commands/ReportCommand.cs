using System.CommandLine;
using Campaign.App.Reports;
using Campaign.Cli.Output;

namespace Campaign.Cli.Commands;

/// <summary>campaign report --out FOLDER: the HTML report with its plots (PNG and SVG).</summary>
internal static class ReportCommand
{
    public static Command Build(CampaignApp app)
    {
        var output = new Option<string>("--out") { Description = "Folder to write report.html and the plots into", Required = true, HelpName = "FOLDER" };
        var candidates = new Option<string?>("--candidates") { Description = "Candidate file, for the coverage map and the proposal table (default: the plan's runs)", HelpName = "FILE" };
        var replicas = new Option<int>("--replicas") { Description = "Forecast replicas (default 1000)", DefaultValueFactory = _ => 1000 };
        var command = new Command("report", "Write a self-contained HTML report: burn-down, run progress, coverage map, cost-model check, proposal table") { output, candidates, replicas };
        app.Bind(command, context =>
        {
            var shown = context.Parse.GetValue(candidates);
            var folder = app.Resolve(context.Parse.GetValue(output)!);
            var result = new ReportService(context.Time).Write(new ReportRequest(context.Workspace, folder, shown is null ? null : app.Resolve(shown), shown, context.Parse.GetValue(replicas)));
            if (context.Json)
            {
                Json.Write(context.Out, new { result.Report, result.Files });
            }
            else
            {
                context.Out.WriteLine($"Report: {result.Report} ({result.Files.Count - 1} plot files beside it)");
            }

            return ExitCodes.Ok;
        });
        return command;
    }
}
