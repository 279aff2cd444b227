// Generates demo-campaign/candidates.csv: the invented group's planned configurations (invented data, for the demo only).
// Run from the repository root:  dotnet run demo-campaign/generate-candidates.cs > demo-campaign/candidates.csv
// Seeded, so the file is reproducible. What it draws is stated in demo-campaign/README.md.
using System.Globalization;

var random = new Random(4711);
var inv = CultureInfo.InvariantCulture;
string F(double v) => (v + 0.0).ToString("0.####", inv); // + 0.0 turns -0 into 0
double Uniform(double low, double high) => Math.Round(low + (high - low) * random.NextDouble(), 2);

Console.WriteLine("# Candidate configurations of the invented demo group (invented data, for the demo only).");
Console.WriteLine("# Made by generate-candidates.cs (seeded; never hand-edited). Columns: docs/formats.md.");
Console.WriteLine("# Either omega0 or orbits per row; empty levels/cores/cluster take the workspace defaults.");
Console.WriteLine("# cluster may list several clusters (first preferred); select may assign the configuration to any of them.");
Console.WriteLine("id,q,chi1x,chi1y,chi1z,chi2x,chi2y,chi2z,omega0,orbits,levels,cores,cluster,value,must");

var rows = new List<string>();
void Add(string kind, double q, (double X, double Y, double Z) chi1, (double X, double Y, double Z) chi2, bool must = false)
{
    var id = $"sm-{rows.Count + 1:D3}-{kind}";
    // Half of the rows give the initial frequency, the other half a number of orbits to the end of inspiral.
    var byOrbits = random.NextDouble() < 0.3;
    var omega0 = byOrbits ? "" : F(Math.Round(0.0185 - 0.0004 * q + 0.001 * random.NextDouble(), 4));
    var orbits = byOrbits ? F(16 + random.Next(9)) : "";
    // Large mass ratios are expensive: skip the coarsest level and ask for more cores; some may also run on gunwale.
    var levels = q > 5 ? "2;3" : "";
    var cores = q > 5 ? (q > 7.5 ? "480" : "384") : "";
    var cluster = q >= 6 && random.NextDouble() < 0.5 ? "gunwale;halyard" : "";
    // The group values precessing and high-mass-ratio configurations more (they are rarer in its catalogue).
    var value = kind == "p" ? 1.5 : q >= 6 ? 1.3 : 1.0;
    rows.Add(string.Join(",", id, F(q), F(chi1.X), F(chi1.Y), F(chi1.Z), F(chi2.X), F(chi2.Y), F(chi2.Z), omega0, orbits, levels, cores, cluster, F(value), must ? "true" : ""));
}

// Anchors the group always runs: equal-mass non-spinning, and equal-mass with equal aligned spins of +-0.6.
Add("n", 1, (0, 0, 0), (0, 0, 0), must: true);
Add("a", 1, (0, 0, 0.6), (0, 0, 0.6), must: true);
Add("a", 1, (0, 0, -0.6), (0, 0, -0.6));

// A non-spinning ladder in mass ratio.
foreach (var q in new[] { 1.5, 2, 2.5, 3, 4, 5, 6, 7, 8, 9, 10 })
{
    Add("n", q, (0, 0, 0), (0, 0, 0));
}

// Aligned spins: mass ratios drawn log-uniformly in [1, 10], spins in [-0.9, 0.9] (the lighter hole's smaller).
while (rows.Count < 96)
{
    var q = Math.Round(Math.Exp(Math.Log(10) * random.NextDouble()) * 4) / 4;
    Add("a", Math.Max(1, q), (0, 0, Uniform(-0.9, 0.9)), (0, 0, Uniform(-0.6, 0.6)));
}

// Precessing: in-plane components too, |chi| kept below 0.8; mass ratios up to 6.
while (rows.Count < 120)
{
    var q = Math.Round((1 + 5 * random.NextDouble()) * 2) / 2;
    (double, double, double) Precessing(double scale)
    {
        var (x, y, z) = (Uniform(-scale, scale), Uniform(-scale, scale), Uniform(-scale, scale));
        var norm = Math.Sqrt(x * x + y * y + z * z);
        var shrink = norm > 0.8 ? 0.79 / norm : 1;
        return (Math.Round(x * shrink, 2), Math.Round(y * shrink, 2), Math.Round(z * shrink, 2));
    }

    Add("p", q, Precessing(0.6), Precessing(0.4));
}

foreach (var row in rows)
{
    Console.WriteLine(row);
}
