using System.CommandLine;
using Campaign.Cli.Output;
using Campaign.App.Models;
using Campaign.Core.CostModel;

namespace Campaign.Cli.Commands;

/// <summary>campaign model fit | show: fit the cost model to the stored run logs, or show the one in use.</summary>
internal static class ModelCommand
{
    public static Command Build(CampaignApp app)
    {
        var command = new Command("model", "The cost model fitted to the group's run logs");
        var robust = new Option<bool>("--robust") { Description = "Huber robust regression: down-weight runs that limped" };
        var folds = new Option<int>("--folds") { Description = "Cross-validation folds (default 5)", DefaultValueFactory = _ => 5 };
        var seed = new Option<int>("--seed") { Description = "Seed of the fold assignment (default 1)", DefaultValueFactory = _ => 1 };
        var fit = new Command("fit", "Fit the cost model to the stored runs, store it, and print its diagnostics") { robust, folds, seed };
        app.Bind(fit, context =>
        {
            var folding = context.Parse.GetValue(folds);
            if (folding < 2 || folding > 100)
            {
                throw new Core.Domain.InvalidInputException(new[] { $"--folds = {folding}: expected an integer from 2 to 100" });
            }

            var options = new CostFitOptions { Robust = context.Parse.GetValue(robust), Folds = folding, Seed = context.Parse.GetValue(seed) };
            CostModelVersion fitted;
            using (var bar = TerminalProgress.For(context, "fit"))
            {
                fitted = new CostModelService(context.Time).Fit(context.Workspace, options, bar);
            }

            Write(context, fitted.Id, fitted.FittedAt, fitted.Model);
            return ExitCodes.Ok;
        });
        command.Add(fit);

        var show = new Command("show", "Print the diagnostics of the cost model in use");
        app.Bind(show, context =>
        {
            var latest = new CostModelService(context.Time).Current(context.Workspace);
            Write(context, latest.Id, latest.FittedAt, latest.Model);
            return ExitCodes.Ok;
        });
        command.Add(show);
        return command;
    }

    internal static void Write(CommandContext context, long id, string fittedAt, FittedCostModel model)
    {
        if (context.Json)
        {
            Json.Write(context.Out, new
            {
                Id = id,
                FittedAt = fittedAt,
                NRuns = model.RunCount,
                RunsSkipped = model.RunsSkipped,
                model.FeatureSet,
                Features = model.Terms,
                Coefficients = model.Terms.Select((t, j) => new { Term = t, Value = model.Coefficients[j], StandardError = model.StandardErrors[j] }),
                model.RSquared,
                model.ResidualSd,
                model.DegreesOfFreedom,
                model.Robust,
                model.UsedPrior,
                CvMedianAbsPctError = model.CvMedianAbsPctError,
                CvIntervalCoverage = model.CvIntervalCoverage,
                model.CvIntervalLevel,
                model.Folds,
                model.Candidates,
                model.Influential,
                model.DownWeighted,
                model.Clusters,
            });
            return;
        }

        var o = context.Out;
        if (!context.Detail)
        {
            WriteShort(o, id, fittedAt, model);
            return;
        }

        o.WriteLine($"Cost model {id} ({fittedAt}): ln(core-hours x cluster speed) fitted on {Format.Count(model.RunCount, "run")} ({model.RunsSkipped} skipped: failed, or partial without t_end).");
        o.WriteLine($"Fit: {(model.Robust ? "Huber robust regression (IRLS)" : "least squares (QR)")}{(model.UsedPrior ? "; FEW LOGS: blended with prior exponents (see docs/cost-model.md), intervals are wider" : "")}.");
        o.WriteLine($"Chosen feature set: {model.FeatureSet} (simplest within one standard error of the best {model.Folds}-fold CV error).");
        o.WriteLine();
        var candidates = new TextTable("feature set", "terms", "CV MSE (ln)", "+- SE", "CV median |error| %", $"CV {Format.Fixed(model.CvIntervalLevel * 100, 0)}% coverage", "chosen");
        foreach (var c in model.Candidates)
        {
            candidates.Add(c.Name, Format.Integer(c.Parameters), Format.Fixed(c.CvMse, 4), Format.Fixed(c.CvMseStandardError, 4), Format.Fixed(c.CvMedianAbsPctError, 1), Format.Fixed(c.CvIntervalCoverage, 3), c.Name == model.FeatureSet ? "*" : "");
        }

        candidates.WriteTo(o);
        o.WriteLine();
        var coefficients = new TextTable("term", "coefficient", "std. error", "reading");
        for (var j = 0; j < model.Terms.Length; j++)
        {
            coefficients.Add(model.Terms[j], Format.Fixed(model.Coefficients[j], 4), Format.Fixed(model.StandardErrors[j], 4), Reading(model.Terms[j], model.Coefficients[j]));
        }

        coefficients.WriteTo(o);
        o.WriteLine();
        o.WriteLine($"R^2 {Format.Fixed(model.RSquared, 4)}; residual SD {Format.Fixed(model.ResidualSd, 4)} in ln units (a typical run lies within x{Format.Fixed(Math.Exp(model.ResidualSd), 2)} of the fit); {Format.Fixed(model.DegreesOfFreedom, 1)} degrees of freedom.");
        o.WriteLine($"Cross-validated: median |error| {Format.Fixed(model.CvMedianAbsPctError, 1)}%, {Format.Fixed(model.CvIntervalLevel * 100, 0)}% intervals covered {Format.Fixed(model.CvIntervalCoverage * 100, 1)}% of held-out runs.");
        if (model.Influential.Length > 0)
        {
            o.WriteLine("Influential runs (Cook's distance > 4/n): " + Format.List(model.Influential.Select(r => $"{r.RunId} ({Format.Fixed(r.CooksDistance, 3)})"), 10));
        }

        if (model.DownWeighted.Length > 0)
        {
            o.WriteLine("Down-weighted runs (robust weight, cost against the fit): " + Format.List(model.DownWeighted.Select(r => $"{r.RunId} ({Format.Fixed(r.Weight, 2)}, {(r.ResidualPct >= 0 ? "+" : "")}{Format.Fixed(r.ResidualPct, 0)}%)"), 10));
        }

        o.WriteLine("These are statistical estimates from the group's own history; the allocating site's charging rules decide what is charged.");
    }

    /// <summary>What a coordinator acts on: how good the model is, what drives cost, and what to be wary of.</summary>
    private static void WriteShort(TextWriter o, long id, string fittedAt, FittedCostModel model)
    {
        var at = DateTimeOffset.TryParse(fittedAt, System.Globalization.CultureInfo.InvariantCulture, System.Globalization.DateTimeStyles.AssumeUniversal, out var t)
            ? t.UtcDateTime.ToString("yyyy-MM-dd HH:mm", System.Globalization.CultureInfo.InvariantCulture) + " UTC"
            : fittedAt;
        o.WriteLine($"Cost model {id}, fitted {at} on {Format.Count(model.RunCount, "run")} ({Format.Integer(model.RunsSkipped)} skipped: failed, or partial without t_end){(model.Robust ? "; robust fit" : "")}.");
        o.WriteLine($"Typical error {Format.Fixed(model.CvMedianAbsPctError, 1)}% (median, on held-out runs); {Format.Fixed(model.CvIntervalLevel * 100, 0)}% intervals held {Format.Fixed(model.CvIntervalCoverage * 100, 1)}% of them.");
        if (model.UsedPrior)
        {
            o.WriteLine("FEW LOGS: the exponents are blended with prior values (docs/cost-model.md), and the intervals are wider.");
        }

        o.WriteLine();
        var drivers = new TextTable("what drives the cost", "effect", "+- 1 SE");
        for (var j = 0; j < model.Terms.Length; j++)
        {
            if (model.Terms[j] != "intercept")
            {
                drivers.Add(Driver(model.Terms[j]), Reading(model.Terms[j], model.Coefficients[j]), Format.Fixed(model.StandardErrors[j], 2));
            }
        }

        drivers.WriteTo(o);
        if (model.DownWeighted.Length > 0)
        {
            o.WriteLine("Outliers, down-weighted: " + Format.List(model.DownWeighted.Select(r => $"{r.RunId} ({(r.ResidualPct >= 0 ? "+" : "")}{Format.Fixed(r.ResidualPct, 0)}%)"), 4) + ".");
        }

        if (model.Influential.Length > 0)
        {
            o.WriteLine("Runs that sway the fit most: " + Format.List(model.Influential.Select(r => r.RunId), 4) + ".");
        }

        o.WriteLine("The full sheet (feature sets compared, coefficients, Cook's distances): --detail.");
        o.WriteLine("Statistical estimates from the group's own history; the site's charging rules decide what is charged.");
    }

    private static string Driver(string term) => term switch
    {
        "ln_length" => "simulated length T/M",
        "ln_q" => "mass ratio q",
        "spin" => "spin, 1 - chi_max",
        "level" => "resolution level",
        "ln_cores" => "cores per job",
        _ when term.StartsWith(FeatureSet.ClusterPrefix, StringComparison.Ordinal) => "cluster " + term[FeatureSet.ClusterPrefix.Length..],
        _ => term,
    };

    private static string Reading(string term, double b) => term switch
    {
        "ln_length" => $"cost ~ (T/M)^{Format.Fixed(b, 2)}",
        "ln_q" => $"cost ~ q^{Format.Fixed(b, 2)}",
        "spin" => $"cost ~ (1 - chi_max)^-{Format.Fixed(b, 2)}",
        "level" => $"x{Format.Fixed(Math.Exp(b), 2)} per resolution level",
        "ln_cores" => $"core-hours ~ cores^{Format.Fixed(b, 2)} (parallel efficiency)",
        "intercept" => "",
        _ => $"x{Format.Fixed(Math.Exp(b), 2)} on this cluster beyond its profile speed",
    };
}
