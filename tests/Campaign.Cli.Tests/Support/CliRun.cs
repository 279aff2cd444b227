using System.Text.Json;

namespace Campaign.Cli.Tests.Support;

/// <summary>Runs the campaign command in-process with captured output.</summary>
public sealed record CliRun(int ExitCode, string Out, string Err)
{
    public static CliRun Of(string currentDirectory, params string[] args) => With(FixedTime.Default, currentDirectory, args);

    /// <summary>With the real clock (tracking needs time to pass).</summary>
    public static CliRun Live(string currentDirectory, params string[] args) => With(TimeProvider.System, currentDirectory, args);

    public static CliRun With(TimeProvider time, string currentDirectory, params string[] args)
    {
        var output = new StringWriter();
        var error = new StringWriter();
        var code = new CampaignApp(output, error, time, currentDirectory).Run(args);
        return new CliRun(code, output.ToString(), error.ToString());
    }

    /// <summary>The demo's hand-picked 16 candidates (the full demo list has 120; tests pin counts on the small one).</summary>
    public static string SmallCandidates => Path.Combine(RepositoryRoot.Path, "demo-campaign", "candidates-small.csv");

    /// <summary>campaign demo FOLDER --skip-run on the small candidate list, with the fixed clock.</summary>
    public static CliRun Demo(string currentDirectory, string folder, params string[] extra) =>
        Of(currentDirectory, new[] { "demo", folder, "--skip-run", "--candidates", SmallCandidates }.Concat(extra).ToArray());

    public JsonElement Json() => JsonDocument.Parse(Out).RootElement;
}
