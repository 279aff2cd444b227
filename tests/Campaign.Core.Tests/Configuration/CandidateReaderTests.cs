using Campaign.Core.Configuration;
using Campaign.Core.Domain;
using Campaign.Core.Physics;

namespace Campaign.Core.Tests.Configuration;

public class CandidateReaderTests
{
    private static readonly string[] Clusters = { "alpha", "beta" };
    private static readonly RunDefaults Defaults = new(new[] { 1, 2 }, 32);

    private static IReadOnlyList<Candidate> Read(string text) =>
        CandidateReader.Read(text, "c.csv", new LengthSettings(), Defaults, "alpha", Clusters);

    [Fact]
    public void Rows_take_defaults_for_empty_cells()
    {
        var candidates = Read("id,q,chi1z,omega0,orbits,levels,cores,cluster,value,must\na,2,0.5,0.02,,,,,,\nb,3,,,20,3;4,64,beta,2.5,yes\n");
        Assert.Equal(2, candidates.Count);
        Assert.Equal(new[] { 1, 2 }, candidates[0].Spec.Levels);
        Assert.Equal(32, candidates[0].Spec.Cores);
        Assert.Equal("alpha", candidates[0].Cluster);
        Assert.Equal(1, candidates[0].Value);
        Assert.False(candidates[0].Must);
        Assert.Equal(new[] { 3, 4 }, candidates[1].Spec.Levels);
        Assert.Equal("beta", candidates[1].Cluster);
        Assert.True(candidates[1].Must);
        Assert.Equal(2.5, candidates[1].Value);
    }

    [Fact]
    public void Every_bad_cell_in_every_row_is_reported_with_line_and_column()
    {
        const string text = "id,q,chi1z,omega0,levels,cores,cluster\na,0.5,0,0.02,,,\nb,2,1.2,0.02,,,\nc,2,0,abc,,,\nd,2,0,0.02,1;x,,\ne,2,0,0.02,,,gamma\na,2,0,0.02,,-3,\n";
        var error = Assert.Throws<InvalidInputException>(() => Read(text));
        Assert.Equal(
            new[]
            {
                "c.csv:2:2: q = 0.5: expected a finite number from 1 to 1000; q is m1/m2 with the heavier hole first; swap the holes: q = 2 and exchange chi1 and chi2",
                "c.csv:3:3: chi1z = 1.2: expected a finite number from -1 to 1",
                "c.csv:4:4: omega0 = abc: expected a finite number written with '.' as the decimal point",
                "c.csv:5:5: levels = 1;x: expected resolution levels as integers separated by ';', e.g. 2;3;4",
                "c.csv:6:7: cluster = gamma: expected clusters with a profile, separated by ';': alpha, beta (\"gamma\" has none)",
                "c.csv:7:1: id = a: expected a unique id; it is already used on line 2",
                "c.csv:7:6: cores = -3: expected an integer from 1 to 10000000",
            },
            error.Problems);
    }

    [Fact]
    public void Missing_columns_are_named()
    {
        var error = Assert.Throws<InvalidInputException>(() => Read("id,chi1z\na,0\n"));
        Assert.Equal(
            new[]
            {
                "c.csv:1:1: column 'q' is missing: expected a header with at least id, q and omega0 or orbits",
                "c.csv:1:1: neither 'omega0' nor 'orbits' is a column: expected one of them",
            },
            error.Problems);
    }

    [Theory]
    [InlineData("\"evil\n\"")]
    [InlineData("\"evil\r\n\"")]
    public void An_id_that_ends_in_a_line_break_is_refused(string quotedId)
    {
        // Regression (faults issue, item 8): '$' matched before a final line break, so "evil\n" was an id.
        var error = Assert.Throws<InvalidInputException>(() => Read($"id,q,chi1z,omega0\n{quotedId},2,0,0.02\n"));
        Assert.Contains(error.Problems, p => p.StartsWith("c.csv:2:1: id = evil", StringComparison.Ordinal) && p.Contains("expected", StringComparison.Ordinal));
    }
}
