using Campaign.Core.CostModel;

namespace Campaign.Core.Tests.CostModel;

public class StudentTTests
{
    // Source: two-sided critical values of Student's t as printed in standard statistical tables
    // (e.g. NIST/SEMATECH e-Handbook of Statistical Methods, section 1.3.6.7.2, "Critical values of the
    // Student's t distribution"), to the three decimals tables print.
    [Theory]
    [InlineData(0.95, 1, 6.314)]
    [InlineData(0.975, 1, 12.706)]
    [InlineData(0.95, 5, 2.015)]
    [InlineData(0.975, 10, 2.228)]
    [InlineData(0.995, 20, 2.845)]
    [InlineData(0.95, 30, 1.697)]
    [InlineData(0.975, 100, 1.984)]
    public void Quantiles_match_published_tables(double p, double dof, double expected)
    {
        Assert.Equal(expected, PredictionInterval.StudentTQuantile(p, dof), 3);
    }

    [Fact]
    public void Quantile_at_34_degrees_matches_the_reference_sheet()
    {
        // Reference sheet (with the Norris prediction interval): t(0.975, 34) = 2.0322445093177.
        Assert.Equal(2.0322445093177, PredictionInterval.StudentTQuantile(0.975, 34), 10);
    }
}
