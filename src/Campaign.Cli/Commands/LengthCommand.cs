using System.CommandLine;
using Campaign.Cli.Output;
using Campaign.Core.Configuration;
using Campaign.Core.Domain;
using Campaign.Core.Physics;
using Campaign.App.Lengths;
using Campaign.App.Workspaces;

namespace Campaign.Cli.Commands;

/// <summary>
/// campaign length: the planning calculator. For one binary given by options, or every row of a candidate
/// file: inspiral time and orbits, remnant, ringdown damping time and total simulated length.
/// </summary>
internal static class LengthCommand
{
    public static Command Build(CampaignApp app)
    {
        var q = new Option<double?>("--q") { Description = "Mass ratio m1/m2 >= 1", HelpName = "Q" };
        var spins = new[] { "chi1x", "chi1y", "chi1z", "chi2x", "chi2y", "chi2z" }
            .Select(n => new Option<double>("--" + n) { Description = $"Spin component {n} (default 0)", HelpName = "CHI" })
            .ToArray();
        var omega0 = new Option<double?>("--omega0") { Description = "Initial orbital frequency M*omega0", HelpName = "MW0" };
        var orbits = new Option<double?>("--orbits") { Description = "Target orbits to the end of inspiral (instead of --omega0)", HelpName = "N" };
        var candidates = new Option<string?>("--candidates") { Description = "A candidate file (CSV); prints one row per configuration", HelpName = "FILE" };
        var command = new Command("length", "Run-length calculator: PN inspiral, remnant, ringdown and total simulated length T/M") { q, omega0, orbits, candidates };
        foreach (var spin in spins)
        {
            command.Add(spin);
        }

        app.Bind(command, context =>
        {
            var settings = Settings(context);
            if (context.Parse.GetValue(candidates) is { } file)
            {
                if (context.Parse.GetResult(q) is not null || context.Parse.GetResult(omega0) is not null || context.Parse.GetResult(orbits) is not null || spins.Any(s => context.Parse.GetResult(s) is not null))
                {
                    throw new UsageException("--candidates reads every configuration from the file: give it without --q, --chi*, --omega0 or --orbits");
                }

                var rows = ForFile(app.Resolve(file), file, settings.Length, settings.Defaults, settings.DefaultCluster, settings.Clusters);
                Write(context, rows, settings.Length);
                return ExitCodes.Ok;
            }

            if (context.Parse.GetResult(q) is null)
            {
                throw new UsageException("give --q (with --omega0 or --orbits and any --chi* components), or --candidates FILE");
            }

            var draft = new BinaryConfigurationDraft
            {
                Name = "binary",
                Q = context.Parse.GetValue(q),
                Chi1X = context.Parse.GetValue(spins[0]),
                Chi1Y = context.Parse.GetValue(spins[1]),
                Chi1Z = context.Parse.GetValue(spins[2]),
                Chi2X = context.Parse.GetValue(spins[3]),
                Chi2Y = context.Parse.GetValue(spins[4]),
                Chi2Z = context.Parse.GetValue(spins[5]),
                Omega0 = context.Parse.GetValue(omega0),
                Orbits = context.Parse.GetValue(orbits),
            };
            var problems = draft.Validate(settings.Length);
            if (problems.Count > 0)
            {
                throw new InvalidInputException(problems.Select(p => (p.Field.StartsWith('|') ? p.Field : "--" + p.Field) + " = " + p.Value + ": expected " + p.Expected).ToList());
            }

            var row = LengthRow.From("binary", draft.BuildConfiguration(settings.Length), settings.Length);
            if (context.Json)
            {
                Json.Write(context.Out, new { Settings = settings.Length, Run = row });
            }
            else
            {
                LengthRow.WriteOne(context.Out, row, settings.Length, context.Detail);
            }

            return ExitCodes.Ok;
        });
        return command;
    }

    /// <summary>Lengths for every row of a candidate file.</summary>
    internal static IReadOnlyList<LengthRow> ForFile(string path, string shownName, LengthSettings length, RunDefaults defaults, string defaultCluster, IReadOnlyCollection<string> clusters) =>
        CandidateFile.Read(path, shownName, length, defaults, defaultCluster, clusters).Select(c => LengthRow.From(c.Id, c.Configuration, length)).ToList();

    internal static void Write(CommandContext context, IReadOnlyList<LengthRow> rows, LengthSettings settings)
    {
        if (context.Json)
        {
            Json.Write(context.Out, new { Settings = settings, Runs = rows });
        }
        else
        {
            LengthRow.WriteTable(context.Out, rows, context.Detail);
        }
    }

    private sealed record LengthInputs(LengthSettings Length, RunDefaults Defaults, string DefaultCluster, IReadOnlyCollection<string> Clusters);

    /// <summary>The workspace's settings when --dir is a workspace, else the built-in defaults and profiles.</summary>
    private static LengthInputs Settings(CommandContext context)
    {
        if (WorkspaceAdmin.Exists(context.Workspace))
        {
            var (config, clusters) = WorkspaceAdmin.Settings(context.Workspace);
            return new LengthInputs(config.Length, config.Defaults, config.DefaultCluster, clusters.Keys.ToList());
        }

        var builtIn = EmbeddedFiles.Under("profiles/").Keys.Select(Path.GetFileNameWithoutExtension).OfType<string>().ToList();
        return new LengthInputs(new LengthSettings(), new RunDefaults(new[] { 1, 2, 3 }, 1), builtIn[0], builtIn);
    }
}
