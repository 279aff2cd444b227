using Campaign.Core.Selection;

namespace Campaign.Core.Tests.Selection;

public class CoverageFunctionTests
{
    public static TheoryData<int> Seeds => new() { 1, 2, 3, 4, 5, 6 };

    private static (CoverageFunction F, List<double[]> Points) Random(int seed, int n = 25)
    {
        var random = new Random(seed);
        var points = Enumerable.Range(0, n).Select(_ => Enumerable.Range(0, 5).Select(_ => 2.5 * random.NextDouble()).ToArray()).ToList();
        var weights = points.Select(_ => 0.2 + random.NextDouble()).ToList();
        return (new CoverageFunction(points, weights, Array.Empty<double[]>()), points);
    }

    [Theory]
    [MemberData(nameof(Seeds))]
    public void Coverage_is_monotone_and_submodular(int seed)
    {
        var (f, points) = Random(seed);
        var random = new Random(seed + 100);
        for (var trial = 0; trial < 40; trial++)
        {
            var b = points.Where(_ => random.NextDouble() < 0.4).ToList();
            var a = b.Where(_ => random.NextDouble() < 0.5).ToList();
            var x = points[random.Next(points.Count)];
            var fa = CoverageFunction.Evaluate(f, a);
            var fb = CoverageFunction.Evaluate(f, b);
            var gainA = CoverageFunction.Evaluate(f, a.Append(x)) - fa;
            var gainB = CoverageFunction.Evaluate(f, b.Append(x)) - fb;
            Assert.True(fb >= fa - 1e-12, "monotone: A subset of B must not cover more");
            Assert.True(gainA >= gainB - 1e-12, $"submodular: gain on A {gainA} below gain on B {gainB}");
            Assert.True(gainB >= -1e-12);
        }
    }

    [Theory]
    [MemberData(nameof(Seeds))]
    public void Coverage_runs_from_0_to_exactly_1_when_every_candidate_is_chosen(int seed)
    {
        var (f, points) = Random(seed);
        Assert.Equal(0, f.Value);
        Assert.Equal(1, CoverageFunction.Evaluate(f, points), 12);
        var half = CoverageFunction.Evaluate(f, points.Take(points.Count / 2));
        Assert.InRange(half, 0, 1);
    }

    [Fact]
    public void Similarity_is_the_gaussian_of_the_scaled_distance()
    {
        // k(a, b) = exp(-d^2 / 2): at d = 1, exp(-0.5) = 0.6065306597126334 (definition in docs/selection.md).
        Assert.Equal(Math.Exp(-0.5), CoverageFunction.Similarity(new double[] { 0, 0, 0, 0, 0 }, new double[] { 0.6, 0.8, 0, 0, 0 }), 15);
        Assert.Equal(1, CoverageFunction.Similarity(new double[] { 1, 2, 3, 4, 5 }, new double[] { 1, 2, 3, 4, 5 }));
        Assert.Equal(0, CoverageFunction.Similarity(new double[] { 0, 0, 0, 0, 0 }, new double[] { 6, 0, 0, 0, 0 }));
    }

    [Fact]
    public void A_single_point_with_weights_gives_the_weighted_mean_similarity()
    {
        var points = new List<double[]> { new double[] { 0, 0 }, new double[] { 1, 0 }, new double[] { 0, 2 } };
        var f = new CoverageFunction(points, new double[] { 1, 2, 1 }, Array.Empty<double[]>());
        f.Add(points[0]);
        var expected = (1 * 1 + 2 * Math.Exp(-0.5) + 1 * Math.Exp(-2)) / 4;
        Assert.Equal(expected, f.Value, 15);
    }
}
