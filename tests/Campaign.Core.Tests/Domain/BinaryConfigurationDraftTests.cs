using Campaign.Core.Domain;
using Campaign.Core.Physics;

namespace Campaign.Core.Tests.Domain;

public class BinaryConfigurationDraftTests
{
    private static readonly LengthSettings Settings = new();

    private static BinaryConfigurationDraft Valid() => new()
    {
        Name = "c1",
        Q = 2,
        Chi1Z = 0.3,
        Omega0 = 0.018,
        Cores = 64,
        Levels = { 1, 2 },
    };

    private static IReadOnlyList<string> Messages(BinaryConfigurationDraft draft) =>
        draft.Validate(Settings, includeRunFields: true).Select(p => p.Message).ToList();

    [Fact]
    public void A_valid_draft_has_no_problems_and_builds()
    {
        var draft = Valid();
        Assert.Empty(Messages(draft));
        var spec = draft.BuildRunSpec(Settings);
        Assert.Equal(2, spec.Configuration.Q.Value);
        Assert.Equal(new[] { 1, 2 }, spec.Levels);
        Assert.Equal(64, spec.Cores);
        Assert.Equal(2.0 / 3.0 * 0.3, spec.Configuration.ChiEffective, 12);
    }

    [Fact]
    public void Q_below_one_is_rejected_with_a_hint_to_swap_the_holes()
    {
        var draft = Valid();
        draft.Q = 0.25;
        Assert.Equal(
            new[] { "q = 0.25: expected a finite number from 1 to 1000; q is m1/m2 with the heavier hole first; swap the holes: q = 4 and exchange chi1 and chi2" },
            Messages(draft));
    }

    [Theory]
    [InlineData(double.NaN, "q = NaN: expected a finite number from 1 to 1000")]
    [InlineData(double.PositiveInfinity, "q = Infinity: expected a finite number from 1 to 1000")]
    [InlineData(1001, "q = 1001: expected a finite number from 1 to 1000")]
    [InlineData(-3, "q = -3: expected a finite number from 1 to 1000")]
    public void Q_out_of_range_or_not_a_number_is_rejected(double q, string message)
    {
        var draft = Valid();
        draft.Q = q;
        Assert.Equal(new[] { message }, Messages(draft));
    }

    [Fact]
    public void Missing_q_is_named()
    {
        var draft = Valid();
        draft.Q = null;
        Assert.Equal(new[] { "q = (missing): expected a mass ratio m1/m2 from 1 to 1000" }, Messages(draft));
    }

    [Fact]
    public void Spin_magnitude_above_one_is_rejected_not_clamped()
    {
        var draft = Valid();
        draft.Chi2X = 0.8;
        draft.Chi2Z = 0.8;
        Assert.Equal(
            new[] { "|chi2| = 1.1313708498984762: expected at most 1 (a Kerr black hole has |chi| <= 1; the value is rejected, not clamped)" },
            Messages(draft));
    }

    [Theory]
    [InlineData("chi1x")]
    [InlineData("chi1y")]
    [InlineData("chi1z")]
    [InlineData("chi2x")]
    [InlineData("chi2y")]
    [InlineData("chi2z")]
    public void Every_spin_component_rejects_NaN_and_values_beyond_one(string field)
    {
        foreach (var (value, shown) in new[] { (double.NaN, "NaN"), (1.5, "1.5"), (-2.0, "-2") })
        {
            var draft = Valid();
            typeof(BinaryConfigurationDraft).GetProperty("Chi" + field[3] + char.ToUpperInvariant(field[4]))!.SetValue(draft, value);
            Assert.Equal(new[] { $"{field} = {shown}: expected a finite number from -1 to 1" }, Messages(draft));
        }
    }

    [Fact]
    public void Omega0_at_or_above_the_end_of_inspiral_is_rejected()
    {
        var draft = Valid();
        draft.Omega0 = 0.1;
        Assert.Equal(
            new[] { "omega0 = 0.1: expected a finite number from 0.0001 to 0.06804131370259542; M*omega0 must lie below the end of inspiral M*omega = 0.068041" },
            Messages(draft));
    }

    [Fact]
    public void Omega0_and_orbits_together_are_refused_and_neither_is_named()
    {
        var both = Valid();
        both.Orbits = 20;
        Assert.Equal(new[] { "orbits = 20: expected either omega0 or orbits, not both" }, Messages(both));
        var neither = Valid();
        neither.Omega0 = null;
        Assert.Equal(new[] { "omega0 = (missing): expected the initial orbital frequency M*omega0 (for example 0.018), or a number of orbits instead (--orbits N, or an orbits column)" }, Messages(neither));
    }

    [Fact]
    public void Orbits_are_converted_to_the_frequency_that_gives_them()
    {
        var draft = Valid();
        draft.Omega0 = null;
        draft.Orbits = 25;
        var configuration = draft.BuildConfiguration(Settings);
        var inspiral = new TaylorT4(configuration.Q, 0.3, 0).Integrate(configuration.Omega0, Settings.EndOfInspiralX);
        Assert.Equal(25, inspiral.Orbits, 1e-6);
    }

    [Theory]
    [InlineData(0L, "cores = 0: expected an integer from 1 to 10000000")]
    [InlineData(20_000_000L, "cores = 20000000: expected an integer from 1 to 10000000")]
    public void Cores_out_of_range_are_rejected(long cores, string message)
    {
        var draft = Valid();
        draft.Cores = cores;
        Assert.Equal(new[] { message }, Messages(draft));
    }

    [Fact]
    public void Levels_must_be_present_in_range_and_distinct()
    {
        var none = Valid();
        none.Levels.Clear();
        Assert.Equal(new[] { "level = (missing): expected at least one resolution level, an integer from 0 to 20" }, Messages(none));
        var bad = Valid();
        bad.Levels.Add(21);
        Assert.Equal(new[] { "level = 21: expected an integer from 0 to 20" }, Messages(bad));
        var repeated = Valid();
        repeated.Levels.Add(2);
        Assert.Equal(new[] { "level = 1,2,2: expected distinct resolution levels" }, Messages(repeated));
    }

    [Fact]
    public void Every_problem_is_reported_at_once()
    {
        var draft = new BinaryConfigurationDraft { Q = 0.5, Chi1Z = 2, Omega0 = -1, Cores = 0 };
        Assert.Equal(5, Messages(draft).Count);
        Assert.Throws<InvalidInputException>(() => draft.BuildRunSpec(Settings));
    }
}
