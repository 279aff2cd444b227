using Campaign.Core.Domain;
using Dapper;

namespace Campaign.Store;

/// <summary>
/// The columns every table that stores a binary's physics shares (q, chi1x .. chi2z, omega0): one mapping for
/// rows read with Dapper and for parameters written.
/// </summary>
public class ConfigurationColumns
{
    public double Q { get; set; }

    public double Chi1x { get; set; }

    public double Chi1y { get; set; }

    public double Chi1z { get; set; }

    public double Chi2x { get; set; }

    public double Chi2y { get; set; }

    public double Chi2z { get; set; }

    public double Omega0 { get; set; }

    /// <summary>The stored configuration as a domain value.</summary>
    public BinaryConfiguration Configuration =>
        new(MassRatio.From(Q), Spin.From(Chi1x, Chi1y, Chi1z, "chi1"), Spin.From(Chi2x, Chi2y, Chi2z, "chi2"), Omega0);

    /// <summary>Sets the columns from a configuration.</summary>
    public void SetConfiguration(BinaryConfiguration c)
    {
        (Q, Omega0) = (c.Q.Value, c.Omega0);
        (Chi1x, Chi1y, Chi1z) = (c.Chi1.X, c.Chi1.Y, c.Chi1.Z);
        (Chi2x, Chi2y, Chi2z) = (c.Chi2.X, c.Chi2.Y, c.Chi2.Z);
    }

    /// <summary>Parameters @Q, @Chi1x .. @Chi2z, @Omega0 for <paramref name="c"/>, plus those of <paramref name="rest"/>.</summary>
    public static DynamicParameters Parameters(BinaryConfiguration c, object rest)
    {
        var parameters = new DynamicParameters(rest);
        var columns = new ConfigurationColumns();
        columns.SetConfiguration(c);
        parameters.AddDynamicParams(new { columns.Q, columns.Chi1x, columns.Chi1y, columns.Chi1z, columns.Chi2x, columns.Chi2y, columns.Chi2z, columns.Omega0 });
        return parameters;
    }
}
