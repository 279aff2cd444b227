using Campaign.Cli.Output;
using Campaign.Core.Domain;
using Campaign.Core.Physics;

namespace Campaign.Cli.Commands;

/// <summary>One configuration's run length, shaped for JSON (snake_case) and for tables.</summary>
internal sealed record LengthRow(
    string Id,
    double Q,
    double[] Chi1,
    double[] Chi2,
    double Eta,
    double ChiEff,
    double Omega0,
    double InspiralTimeM,
    double InspiralOrbits,
    double LeadingOrderTimeM,
    double MergerM,
    double PostPeakM,
    double ExtractionTravelM,
    double TotalM,
    double RemnantMass,
    double RemnantSpin,
    double RingdownFrequency,
    double RingdownDampingTimeM)
{
    public static LengthRow From(string id, BinaryConfiguration c, LengthSettings settings)
    {
        var length = SimulatedLength.Estimate(c, settings);
        return new LengthRow(
            id,
            c.Q.Value,
            new[] { c.Chi1.X, c.Chi1.Y, c.Chi1.Z },
            new[] { c.Chi2.X, c.Chi2.Y, c.Chi2.Z },
            c.Q.SymmetricMassRatio,
            c.ChiEffective,
            c.Omega0,
            length.Inspiral.Time,
            length.Inspiral.Orbits,
            length.LeadingOrderTime,
            length.Merger,
            length.PostPeak,
            length.ExtractionTravel,
            length.Total,
            length.Remnant.Mass,
            length.Remnant.Spin,
            length.Ringdown.Frequency / length.Remnant.Mass,
            length.DampingTime);
    }

    /// <summary>The caution printed under every length table, once.</summary>
    public const string Caution = "Post-Newtonian estimates, in units of the total mass M: check short runs before committing an allocation.";

    /// <summary>What --detail adds under the caution: where the numbers come from.</summary>
    public const string Method =
        "Inspiral: TaylorT4 3.5PN with the leading aligned-spin term (in-plane spins neglected); merger, post-peak and extraction allowances from the [length] settings.";

    public static void WriteTable(TextWriter writer, IReadOnlyList<LengthRow> rows, bool detail = false)
    {
        var table = detail
            ? new TextTable("id", "q", "chi_eff", "|chi1|", "|chi2|", "M*omega0", "orbits", "inspiral M", "total M", "M_f", "chi_f", "tau_220 M")
            : new TextTable("id", "q", "chi_eff", "|chi1|", "|chi2|", "M*omega0", "orbits", "total M", "M_f", "chi_f");
        foreach (var r in rows)
        {
            var cells = new List<string>
            {
                r.Id,
                Format.Significant(r.Q),
                Format.Fixed(r.ChiEff, 3),
                Format.Fixed(Magnitude(r.Chi1), 3),
                Format.Fixed(Magnitude(r.Chi2), 3),
                Format.Fixed(r.Omega0, 5),
                Format.Fixed(r.InspiralOrbits, 1),
            };
            if (detail)
            {
                cells.Add(Format.Fixed(r.InspiralTimeM, 0));
            }

            cells.AddRange(new[] { Format.Fixed(r.TotalM, 0), Format.Fixed(r.RemnantMass, 4), Format.Fixed(r.RemnantSpin, 3) });
            if (detail)
            {
                cells.Add(Format.Fixed(r.RingdownDampingTimeM, 2));
            }

            table.Add(cells.ToArray());
        }

        table.WriteTo(writer);
        writer.WriteLine(Caution);
        if (detail)
        {
            writer.WriteLine(Method);
        }
    }

    public static void WriteOne(TextWriter writer, LengthRow r, LengthSettings settings, bool detail = false)
    {
        writer.WriteLine($"Binary q = {Format.Significant(r.Q, 6)}, chi1 = ({Join(r.Chi1)}), chi2 = ({Join(r.Chi2)}), M*omega0 = {Format.Significant(r.Omega0, 6)}");
        if (!detail)
        {
            var brief = new TextTable("quantity", "value", "unit");
            brief.Add("total simulated length", Format.Fixed(r.TotalM, 0), "M");
            brief.Add("inspiral orbits", Format.Fixed(r.InspiralOrbits, 1), "orbits");
            brief.Add("inspiral time", Format.Fixed(r.InspiralTimeM, 0), "M");
            brief.Add("remnant mass M_f", Format.Fixed(r.RemnantMass, 4), "M");
            brief.Add("remnant spin chi_f", Format.Fixed(r.RemnantSpin, 3), "");
            brief.WriteTo(writer);
            writer.WriteLine(Caution + " Every term and its formula: --detail.");
            return;
        }

        var table = new TextTable("quantity", "value", "unit", "note");
        table.Add("symmetric mass ratio eta", Format.Fixed(r.Eta, 5), "", "q/(1+q)^2");
        table.Add("effective spin chi_eff", Format.Fixed(r.ChiEff, 4), "", "(m1 chi1z + m2 chi2z)/M");
        table.Add("inspiral time", Format.Fixed(r.InspiralTimeM, 1), "M", $"TaylorT4 3.5PN to x = {Format.Significant(settings.EndOfInspiralX, 4)}");
        table.Add("inspiral orbits", Format.Fixed(r.InspiralOrbits, 2), "orbits", "");
        table.Add("leading-order time", Format.Fixed(r.LeadingOrderTimeM, 1), "M", "Peters (1964), to coalescence, for comparison");
        table.Add("merger allowance", Format.Fixed(r.MergerM, 1), "M", "end of inspiral to peak");
        table.Add("post-peak", Format.Fixed(r.PostPeakM, 1), "M", $"max({Format.Significant(settings.MinimumPostPeak)} M, {Format.Significant(settings.RingdownEFolds)} x tau_220)");
        table.Add("extraction travel", Format.Fixed(r.ExtractionTravelM, 1), "M", $"tortoise radius of R = {Format.Significant(settings.ExtractionRadius)} M");
        table.Add("total simulated length", Format.Fixed(r.TotalM, 1), "M", "");
        table.Add("remnant mass M_f", Format.Fixed(r.RemnantMass, 5), "M", "");
        table.Add("remnant spin chi_f", Format.Fixed(r.RemnantSpin, 4), "", "");
        table.Add("ringdown frequency omega_220", Format.Fixed(r.RingdownFrequency, 4), "1/M", "");
        table.Add("ringdown damping time tau_220", Format.Fixed(r.RingdownDampingTimeM, 2), "M", "");
        table.WriteTo(writer);
        writer.WriteLine(Caution);
        writer.WriteLine(Method);
    }

    private static double Magnitude(double[] v) => Math.Sqrt(v.Sum(x => x * x));

    private static string Join(double[] v) => string.Join(", ", v.Select(x => Format.Significant(x, 4)));
}
