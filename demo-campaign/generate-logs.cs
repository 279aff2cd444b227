#:project ../src/Campaign.Core/Campaign.Core.csproj
// Generates demo-campaign/run-logs.csv: the invented group's past runs (invented data, for the demo only).
// Run from the repository root:  dotnet run demo-campaign/generate-logs.cs > demo-campaign/run-logs.csv
// Seeded, so the file is reproducible. The cost law is stated in demo-campaign/README.md.
using System.Globalization;
using Campaign.Core.Domain;
using Campaign.Core.Physics;

var random = new Random(2027);
var inv = CultureInfo.InvariantCulture;
double Normal() => Math.Sqrt(-2 * Math.Log(1 - random.NextDouble())) * Math.Cos(2 * Math.PI * random.NextDouble());
string F(double v, string format = "G6") => v.ToString(format, inv);

var clusters = new[] { ("halyard", 1.0, 128, new[] { 128, 256, 384, 512 }, 48.0), ("gunwale", 0.7, 48, new[] { 96, 192, 288, 480 }, 24.0) };
var massRatios = new[] { 1.0, 1.5, 2, 2.5, 3, 4, 5, 6, 7, 8 };
var settings = new LengthSettings();
var start = new DateTimeOffset(2025, 1, 6, 8, 0, 0, TimeSpan.Zero);
Console.WriteLine("run_id,q,chi1x,chi1y,chi1z,chi2x,chi2y,chi2z,omega0,level,cores,cluster,wall_hours,outcome,core_hours,t_end,legs,checkpoint_gb,output_gb,started,finished,notes");
var run = 0;
for (var c = 0; c < 46; c++)
{
    var q = massRatios[random.Next(massRatios.Length)];
    var kind = random.NextDouble();
    var precessing = kind < 0.2;
    var nonSpinning = kind > 0.75;
    double Component(double scale) => Math.Round(scale * (2 * random.NextDouble() - 1), 2);
    var chi1 = precessing ? (Component(0.5), Component(0.5), Component(0.5)) : nonSpinning ? (0.0, 0.0, 0.0) : (0.0, 0.0, Component(0.85));
    var chi2 = precessing ? (Component(0.4), Component(0.4), Component(0.4)) : nonSpinning ? (0.0, 0.0, 0.0) : (0.0, 0.0, Component(0.6));
    var omega0 = Math.Round(0.014 + 0.006 * random.NextDouble(), 4);
    var configuration = new BinaryConfiguration(MassRatio.From(q), Spin.From(chi1.Item1, chi1.Item2, chi1.Item3), Spin.From(chi2.Item1, chi2.Item2, chi2.Item3), omega0);
    var length = SimulatedLength.Estimate(configuration, settings).Total;
    var (cluster, speed, coresPerNode, coreChoices, wallLimit) = clusters[random.NextDouble() < 0.6 ? 0 : 1];
    var cores = coreChoices[random.Next(coreChoices.Length)];
    var chiMax = Math.Min(Math.Max(configuration.Chi1.Magnitude, configuration.Chi2.Magnitude), 0.999);
    var levels = random.NextDouble() < 0.75 ? new[] { 1, 2, 3 } : new[] { 2, 3 };
    // About a third of the configurations logged their short eccentricity-reduction trials (level 1, 1000-2000 M).
    var trials = random.NextDouble() < 0.35 ? 2 + random.Next(2) : 0;
    foreach (var (level, trialLength) in Enumerable.Repeat((1, 1000 + 1000 * random.NextDouble()), trials).Concat(levels.Select(l => (l, 0.0))))
    {
        run++;
        var planned = trialLength > 0 ? Math.Round(trialLength) : length;
        // The demo's cost law (README.md): core-hours for the whole run on this cluster.
        var law = 2500 * (planned / 1000) * Math.Pow(q, 0.8) * Math.Pow(1 - chiMax, -0.35) * Math.Pow(1.9, level - 1) * Math.Pow(cores / 128.0, 0.12) / speed;
        var coreHours = law * Math.Exp(0.18 * Normal());
        var notes = "";
        if (random.NextDouble() < 0.05)
        {
            coreHours *= 2 + random.NextDouble();
            notes = "slow file system for weeks";
        }

        var outcomeDraw = random.NextDouble();
        var outcome = outcomeDraw < 0.88 ? "completed" : outcomeDraw < 0.94 ? "partial" : "failed";
        var reached = outcome == "completed" ? planned : outcome == "partial" ? planned * (0.3 + 0.6 * random.NextDouble()) : planned * 0.15 * random.NextDouble();
        coreHours *= reached / planned;
        var wall = coreHours / cores;
        var legs = (int)Math.Max(1, Math.Ceiling(wall / (wallLimit - 0.5)));
        var nodes = (cores + coresPerNode - 1) / coresPerNode;
        var charged = cluster == "halyard" ? wall * nodes * coresPerNode : wall * cores * 0.8;
        var checkpoint = Math.Pow(2, level) * 1.5 * Math.Pow(q, 0.3) * Math.Exp(0.1 * Normal());
        var output = 0.8 * Math.Pow(2, level) * reached / 1000 * Math.Exp(0.15 * Normal());
        var started = start.AddHours(run * 60 + random.Next(48));
        var finished = started.AddHours(wall * 1.6 + 24 * legs * random.NextDouble());
        Console.WriteLine(string.Join(",",
            $"sr-{run:D3}", F(q), F(chi1.Item1), F(chi1.Item2), F(chi1.Item3), F(chi2.Item1), F(chi2.Item2), F(chi2.Item3), F(omega0),
            level.ToString(inv), cores.ToString(inv), cluster, F(wall, "F2"), outcome, F(charged, "F0"), outcome == "failed" ? "" : F(reached, "F0"),
            legs.ToString(inv), F(checkpoint, "F2"), F(output, "F1"), started.ToString("yyyy-MM-ddTHH:mm:ssZ", inv), finished.ToString("yyyy-MM-ddTHH:mm:ssZ", inv), trialLength > 0 ? "eccentricity trial" : notes));
    }
}
