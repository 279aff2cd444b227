using Campaign.Cli.Tests.Support;

namespace Campaign.Cli.Tests;

public class LengthCommandTests
{
    [Fact]
    public void Json_output_carries_the_reference_inspiral_values()
    {
        // Reference sheet (TaylorT4 per Blanchet 2014 / Boyle et al. 2007): M omega = 0.01 to x = 1/6, q = 4:
        // T = 24937.87 M, N = 59.644; remnant of Pan et al. (2011) at q = 4: M_f = 0.977958, chi_f = 0.471657.
        using var folder = new TempFolder();
        var run = CliRun.Of(folder.Path, "length", "--q", "4", "--omega0", "0.01", "--json");
        Assert.Equal(0, run.ExitCode);
        var result = run.Json().GetProperty("run");
        Assert.Equal(24937.87, result.GetProperty("inspiral_time_m").GetDouble(), 0.01);
        Assert.Equal(59.644, result.GetProperty("inspiral_orbits").GetDouble(), 0.001);
        Assert.Equal(0.977958, result.GetProperty("remnant_mass").GetDouble(), 6);
        Assert.Equal(0.471657, result.GetProperty("remnant_spin").GetDouble(), 6);
        // Total = inspiral + 100 M + max(150 M, 10 tau) + (500 + 2 ln 249) M with the default settings.
        var expectedTotal = result.GetProperty("inspiral_time_m").GetDouble() + 100 + 150 + 500 + 2 * Math.Log(249);
        Assert.Equal(expectedTotal, result.GetProperty("total_m").GetDouble(), 6);
    }

    [Fact]
    public void Orbits_option_gives_the_frequency_for_that_many_orbits()
    {
        using var folder = new TempFolder();
        var run = CliRun.Of(folder.Path, "length", "--q", "1", "--orbits", "39.061", "--json");
        Assert.Equal(0, run.ExitCode);
        // Reference sheet: 39.061 orbits from M omega = 0.01 at q = 1, non-spinning.
        Assert.Equal(0.01, run.Json().GetProperty("run").GetProperty("omega0").GetDouble(), 5);
    }

    [Fact]
    public void Human_output_is_a_table_with_the_caution()
    {
        using var folder = new TempFolder();
        var run = CliRun.Of(folder.Path, "length", "--q", "4", "--chi1z", "0.5", "--omega0", "0.016");
        Assert.Equal(0, run.ExitCode);
        Assert.Contains("total simulated length", run.Out);
        Assert.Contains("Post-Newtonian estimates", run.Out);
    }

    [Fact]
    public void Bad_values_exit_with_2_and_name_option_value_and_range()
    {
        using var folder = new TempFolder();
        var run = CliRun.Of(folder.Path, "length", "--q", "0.5", "--chi1z", "NaN", "--omega0", "0.02");
        Assert.Equal(2, run.ExitCode);
        Assert.Equal(
            "campaign: error: --q = 0.5: expected a finite number from 1 to 1000; q is m1/m2 with the heavier hole first; swap the holes: q = 2 and exchange chi1 and chi2\n" +
            "campaign: error: --chi1z = NaN: expected a finite number from -1 to 1\n" +
            "campaign: nothing was changed.\n",
            run.Err);
    }

    [Fact]
    public void Bad_values_with_json_also_write_a_json_error()
    {
        using var folder = new TempFolder();
        var run = CliRun.Of(folder.Path, "length", "--q", "2", "--chi1x", "0.9", "--chi1z", "0.9", "--omega0", "0.02", "--json");
        Assert.Equal(2, run.ExitCode);
        var error = run.Json().GetProperty("error");
        Assert.Equal("bad_input", error.GetProperty("kind").GetString());
        Assert.StartsWith("|chi1| = 1.27", error.GetProperty("problems")[0].GetString());
    }

    [Fact]
    public void A_candidate_file_gives_one_row_per_configuration_or_located_errors()
    {
        using var folder = new TempFolder();
        File.WriteAllText(folder.File("c.csv"), "id,q,chi1z,omega0\na,1,0,0.01\nb,4,0.3,0.012\n");
        var run = CliRun.Of(folder.Path, "length", "--candidates", "c.csv", "--json");
        Assert.Equal(0, run.ExitCode);
        var runs = run.Json().GetProperty("runs");
        Assert.Equal(2, runs.GetArrayLength());
        Assert.Equal(39.061, runs[0].GetProperty("inspiral_orbits").GetDouble(), 0.001);

        File.WriteAllText(folder.File("bad.csv"), "id,q,chi1z,omega0\na,1,0,0.01\nb,4,0.3,0.0.1\n");
        var bad = CliRun.Of(folder.Path, "length", "--candidates", "bad.csv");
        Assert.Equal(2, bad.ExitCode);
        Assert.Contains("bad.csv:3:4: omega0 = 0.0.1: expected a finite number written with '.' as the decimal point", bad.Err);
    }
}
