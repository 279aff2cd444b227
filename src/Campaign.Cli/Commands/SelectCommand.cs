using System.CommandLine;
using Campaign.App.Plans;
using Campaign.Cli.Output;
using Campaign.Core.Selection;

namespace Campaign.Cli.Commands;

/// <summary>campaign select FILE: choose the configurations to run within the budget(s).</summary>
internal static class SelectCommand
{
    /// <summary>The --budget amount as people write it, or a plain error naming what is wrong.</summary>
    private static double? Budget(string? text)
    {
        if (text is null)
        {
            return null;
        }

        if (!Core.Text.Amount.TryParse(text, out var value) || value <= 0)
        {
            throw new Core.Domain.InvalidInputException(new[] { $"--budget = {text}: expected {Core.Text.Amount.Expected} (core-hours, greater than 0)" });
        }

        return value;
    }

    public static Command Build(CampaignApp app)
    {
        var file = new Argument<string>("FILE") { Description = "Candidate file (CSV; the same as for estimate)" };
        var objective = new Option<string>("--objective") { Description = "coverage (default): cover the parameter space; value: maximise the sum of the value column", DefaultValueFactory = _ => "coverage" };
        Choices.Restrict(objective, "coverage", "value");
        var budget = new Option<string?>("--budget") { Description = "One budget in charged core-hours for all clusters, e.g. 2.5M, 250k or 2,500,000 (default: the allocations in campaign.toml, one per cluster)", HelpName = "CORE_HOURS" };
        var quantile = new Option<double>("--quantile") { Description = "Cost quantile charged against the budget (default 0.5; 0.8 or 0.9 for a risk-averse plan)", DefaultValueFactory = _ => 0.5 };
        var exclude = new Option<string[]>("--exclude") { Description = "Candidate ids never to choose (repeat, or separate with commas)", AllowMultipleArgumentsPerToken = true, HelpName = "ID" };
        var maxRuns = new Option<int?>("--max-runs") { Description = "Most configurations to choose", HelpName = "N" };
        var trials = new Option<int>("--ecc-trials") { Description = "Eccentricity-reduction trial runs per configuration, included in its cost (default 0)" };
        var trialLength = new Option<double>("--ecc-length") { Description = "Simulated length of each trial run in M (default 1500)", DefaultValueFactory = _ => 1500 };
        var leftOut = new Option<int>("--left-out") { Description = "How many of the best left-out candidates to list (default 10)", DefaultValueFactory = _ => 10 };
        var save = new Option<bool>("--save") { Description = "Store the selection as the workspace's plan (a new version; started runs are always kept)" };
        var withdraw = new Option<bool>("--withdraw") { Description = "Withdraw the tracked configurations that --exclude names (their runs are given up, their jobs cancelled by the next cycle); without it excluding one is refused" };
        var command = new Command("select", "Choose the configurations that cover the parameter space best (or give the most value) within the budget")
        {
            file, objective, budget, quantile, exclude, maxRuns, trials, trialLength, leftOut, save, withdraw,
        };
        app.Bind(command, context =>
        {
            var shown = context.Parse.GetValue(file)!;
            var request = new SelectRequest(
                context.Workspace,
                app.Resolve(shown),
                shown,
                context.Parse.GetValue(objective) == "value" ? SelectionObjective.Value : SelectionObjective.Coverage,
                Budget(context.Parse.GetValue(budget)),
                context.Parse.GetValue(quantile),
                (context.Parse.GetValue(exclude) ?? Array.Empty<string>()).SelectMany(e => e.Split(',', StringSplitOptions.TrimEntries | StringSplitOptions.RemoveEmptyEntries)).ToList(),
                context.Parse.GetValue(maxRuns),
                context.Parse.GetValue(trials),
                context.Parse.GetValue(trialLength),
                Math.Max(0, context.Parse.GetValue(leftOut)),
                context.Parse.GetValue(save),
                context.Parse.GetValue(withdraw));
            SelectResult result;
            using (var bar = TerminalProgress.For(context, "select"))
            {
                result = new PlanService(context.Time).Select(request, bar);
            }

            Write(context, result);
            return ExitCodes.Ok;
        });
        return command;
    }

    /// <summary>Writes a selection (and the plan it was saved as).</summary>
    public static void Write(CommandContext context, SelectResult selected)
    {
        var (kind, request, built, result, report, existing, planId) = (selected.Request.Objective, selected.Request, selected.Built, selected.Result, selected.Report, selected.Existing, selected.PlanId);
        var totalCost = report.Chosen.Sum(c => c.Cost);
        var totalBudget = report.Pools.Sum(p => p.Capacity);
        if (context.Json)
        {
            Json.Write(context.Out, new
            {
                Objective = kind.ToString().ToLowerInvariant(),
                Selected = report.Chosen.Select(c => c.Id),
                Assignment = report.Chosen.ToDictionary(c => c.Id, c => c.Cluster),
                Cost = totalCost,
                CostMedian = report.Chosen.Sum(c => c.Median),
                CostHigh = report.Chosen.Sum(c => c.High),
                Budget = totalBudget,
                request.Quantile,
                Value = result.Objective,
                UpperBound = result.UpperBound,
                result.Gap,
                result.Method,
                result.Guarantee,
                ExistingRuns = existing,
                Pools = report.Pools.Select(p => new { p.Name, p.Capacity, p.Used, p.Left, p.UsedMedian, p.UsedHigh }),
                Runs = report.Chosen,
                LeftOut = report.LeftOut.Select(l => new { l.Id, l.Cluster, l.Cost, l.Gain, CostPerGain = double.IsInfinity(l.CostPerGain) ? (double?)null : l.CostPerGain, l.Reason }),
                Dropped = built.Dropped.Select(d => new { d.Id, d.Reason }),
                PlanId = planId,
                CarriedOver = selected.Carried.Select(c => new { c.ConfigId, c.Cluster, c.RemainingCost, c.Why }),
                Withdrawn = selected.Withdrawn ?? Array.Empty<string>(),
                Reserved = selected.Reserved,
            });
            return;
        }

        var o = context.Out;
        var what = kind == SelectionObjective.Coverage
            ? $"coverage of the {built.Problem.Candidates.Count} candidates (with {existing} configurations already covered: completed runs and started ones)"
            : "the sum of the value column";
        o.WriteLine(context.Detail
            ? $"Selection maximising {what}; costs are charged core-hours at the {Format.Fixed(request.Quantile * 100, 0)}th percentile of each configuration (all its levels)."
            : $"Chose {Format.Integer(report.Chosen.Count)} of {Format.Count(built.Problem.Candidates.Count, "candidate")} for {(kind == SelectionObjective.Coverage ? $"coverage ({Format.Integer(existing)} configurations already covered)" : "value")}; cost = charged core-hours of all levels at the {Format.Fixed(request.Quantile * 100, 0)}th percentile.");
        var gainHeader = kind == SelectionObjective.Coverage ? "coverage gain" : "gain";
        var table = context.Detail
            ? new TextTable("#", "id", "cluster", "cost", "median", "high", "value", gainHeader, "required")
            : new TextTable("#", "id", "cluster", "cost", "median", "high", gainHeader, "required");
        var k = 0;
        foreach (var c in report.Chosen)
        {
            var cells = new List<string> { Format.Integer(++k), c.Id, c.Cluster, Format.Fixed(c.Cost, 0), Format.Fixed(c.Median, 0), Format.Fixed(c.High, 0) };
            if (context.Detail)
            {
                cells.Add(Format.Significant(c.Value, 3));
            }

            cells.Add(Format.Fixed(c.Gain, 4));
            cells.Add(c.Must ? "yes" : "");
            table.Add(cells.ToArray());
        }

        table.WriteTo(o);
        o.WriteLine();
        var pools = new TextTable("cluster", "budget", "chosen", "left", "chosen at median", "chosen at high");
        foreach (var p in report.Pools)
        {
            pools.Add(p.Name, Format.Fixed(p.Capacity, 0), Format.Fixed(p.Used, 0), Format.Fixed(p.Left, 0), Format.Fixed(p.UsedMedian, 0), Format.Fixed(p.UsedHigh, 0));
        }

        pools.WriteTo(o);
        o.WriteLine();
        var name = kind == SelectionObjective.Coverage ? "Coverage" : "Value";
        o.WriteLine($"{name} {Format.Fixed(result.Objective, 4)}; the best possible is at most {Format.Fixed(result.UpperBound, 4)}, so this is within {Format.Fixed(result.Gap * 100, 1)}% of it.");
        if (context.Detail)
        {
            o.WriteLine($"Method: {result.Method}{(result.Guarantee is > 0 and < 1 ? $" (worst-case guarantee {Format.Fixed(result.Guarantee, 3)} of the optimum)" : "")}.");
        }

        if (report.LeftOut.Count > 0 && !context.Detail)
        {
            o.WriteLine("Best left out: " + Format.List(report.LeftOut.Select(l => $"{l.Id} ({l.Reason})"), 3, "; ") + ".");
        }

        if (report.LeftOut.Count > 0 && context.Detail)
        {
            o.WriteLine();
            o.WriteLine("Best candidates left out:");
            var left = new TextTable("id", "cluster", "cost", "gain", "cost per unit gain", "why").Wrap("why");
            foreach (var l in report.LeftOut)
            {
                left.Add(l.Id, l.Cluster, Format.Fixed(l.Cost, 0), Format.Fixed(l.Gain, 4), double.IsInfinity(l.CostPerGain) ? "-" : Format.Fixed(l.CostPerGain, 0), l.Reason);
            }

            left.WriteTo(o);
        }

        foreach (var (id, reason) in built.Dropped)
        {
            o.WriteLine($"Not considered: {id}: {reason}.");
        }

        if (selected.Carried.Count > 0)
        {
            o.WriteLine();
            o.WriteLine($"Kept because they have started ({selected.Carried.Count}; not chosen again, their remaining cost taken off the budget first):");
            var kept = new TextTable("id", "cluster", "still needs core-h", "runs").Wrap("runs");
            foreach (var c in selected.Carried)
            {
                kept.Add(c.ConfigId, c.Cluster, Format.Fixed(c.RemainingCost, 0), c.Why);
            }

            kept.WriteTo(o);
        }

        if (selected.Withdrawn is { Count: > 0 } gone)
        {
            o.WriteLine($"Withdrawn from the campaign ({(planId is null ? "would be, with --save" : "given up; their jobs are cancelled by the next cycle")}): {Format.List(gone, context.Detail ? int.MaxValue : 10)}.");
        }

        if (selected.Reserved.Count > 0)
        {
            o.WriteLine("Taken off the budgets before choosing (spent so far plus what started runs still need): " + string.Join(", ", selected.Reserved.Select(r => $"{r.Key} {Format.Fixed(r.Value, 0)}")) + " core-hours.");
        }

        if (planId is not null)
        {
            o.WriteLine($"Saved as plan {planId}{(selected.Carried.Count > 0 ? $" ({Format.Count(selected.Carried.Count, "started configuration")} carried over: {Format.List(selected.Carried.Select(c => c.ConfigId), context.Detail ? int.MaxValue : 10)})" : "")}.");
        }

        o.WriteLine("Costs are statistical estimates; at the median about half the runs will cost more. The site's charging rules and policies decide what is charged.");
    }
}
