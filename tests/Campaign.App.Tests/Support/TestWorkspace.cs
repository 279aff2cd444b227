using System.Text.RegularExpressions;
using Campaign.App.Plans;
using Campaign.App.Runs;
using Campaign.App.Workspaces;
using Campaign.Core.Selection;

namespace Campaign.App.Tests.Support;

/// <summary>A workspace with the demo group's config, cluster profiles, run logs and small candidate list (invented demo data).</summary>
public static class TestWorkspace
{
    /// <summary>Creates it in <paramref name="root"/>, with production-like tracking (legs as long as each cluster allows).</summary>
    public static void Create(string root, TimeProvider clock, string extraTracking = "")
    {
        var demo = Path.Combine(RepositoryRoot.Path, "demo-campaign");
        var config = File.ReadAllText(Path.Combine(demo, "campaign.toml"));
        config = Regex.Replace(config, @"\[tracking\][\s\S]*$", "[tracking]\nscript = \"run-leg.sh\"\nstall_minutes = 2880\n" + extraTracking);
        var profiles = Directory.GetFiles(Path.Combine(RepositoryRoot.Path, "cluster-profiles"), "*.toml").ToDictionary(f => Path.GetFileName(f), File.ReadAllText);
        new WorkspaceAdmin(clock).Create(root, config, profiles, force: false);
        File.Copy(Path.Combine(demo, "run-logs.csv"), Path.Combine(root, "run-logs.csv"));
        File.Copy(Path.Combine(demo, "candidates-small.csv"), Path.Combine(root, "candidates.csv"));
        File.WriteAllText(Path.Combine(root, "run-leg.sh"), "#!/bin/sh\n");
        File.SetUnixFileMode(Path.Combine(root, "run-leg.sh"), (UnixFileMode)Convert.ToInt32("755", 8));
    }

    /// <summary>A workspace whose plan is the configurations of <paramref name="candidates"/> (CSV rows with core_hours), all tracked.</summary>
    public static void CreateTracking(string root, TimeProvider clock, string candidates, string extraTracking = "")
    {
        Create(root, clock, extraTracking);
        File.WriteAllText(Path.Combine(root, "plan.csv"), "id,q,chi1z,omega0,levels,cores,cluster,core_hours\n" + candidates);
        new PlanService(clock).Select(new SelectRequest(root, Path.Combine(root, "plan.csv"), "plan.csv", SelectionObjective.Coverage, 1e7, 0.5, Array.Empty<string>(), null, 0, 1500, 5, Save: true));
        new TrackService(clock).Track(new TrackRequest(root, null, null, null, false));
    }
}
