using Campaign.Core.Configuration;
using Campaign.Core.Domain;
using Campaign.Core.Physics;

namespace Campaign.Core.Tests.Configuration;

public class RunLogReaderTests
{
    private const string Header = "run_id,q,chi1z,chi2z,omega0,level,cores,cluster,wall_hours,outcome,t_end,checkpoint_gb,started,finished,note";

    private static IReadOnlyList<RunLogRow> Read(string text) => RunLogReader.Read(text, "l.csv", new LengthSettings(), new[] { "alpha", "beta" });

    [Fact]
    public void A_valid_file_is_read_with_optional_fields_and_extra_columns_kept()
    {
        var rows = Read(Header + "\nr1,2,0.5,0,0.018,2,128,alpha,100.5,completed,6000,3.5,2026-01-02,2026-02-01T10:00:00Z,first\nr2,1,0,0,0.02,1,64,beta,10,failed,,,,,\n");
        Assert.Equal(2, rows.Count);
        var r1 = rows[0].Log;
        Assert.Equal(2, r1.Configuration.Q.Value);
        Assert.Equal(0.5, r1.Configuration.Chi1.Z);
        Assert.Equal(12864, r1.ConsumedCoreHours);
        Assert.Equal(6000, r1.TEnd);
        Assert.Equal(new DateTimeOffset(2026, 1, 2, 0, 0, 0, TimeSpan.Zero), r1.Started);
        Assert.Equal("first", rows[0].Extra["note"]);
        Assert.Equal(RunOutcome.Failed, rows[1].Log.Outcome);
        Assert.Null(rows[1].Log.TEnd);
    }

    [Fact]
    public void The_legs_column_is_read_under_its_former_name_too_and_not_kept_as_an_extra_column()
    {
        var now = Read("run_id,q,chi1z,chi2z,omega0,level,cores,cluster,wall_hours,outcome,legs\nr1,2,0,0,0.018,1,64,alpha,10,completed,7\n");
        var before = Read("run_id,q,chi1z,chi2z,omega0,level,cores,cluster,wall_hours,outcome,segments\nr1,2,0,0,0.018,1,64,alpha,10,completed,7\n");
        Assert.Equal(7, now[0].Log.Legs);
        Assert.Equal(7, before[0].Log.Legs);
        Assert.Empty(before[0].Extra);
    }

    [Fact]
    public void Every_bad_cell_of_every_row_is_listed_with_its_location()
    {
        const string text = Header + "\n" +
            "r1,0.5,0,0,0.018,2,128,alpha,100,completed,,,,,\n" +
            "r2,2,0,0,0.018,2,0,gamma,-1,done,,,,,\n" +
            "r1,2,0,0,0.018,25,128,alpha,100,completed,NaN,,2026-13-01,,\n" +
            "r4,2,0,0,0.018,2,128,alpha,100,completed,,,2026-02-01,2026-01-01,\n";
        var error = Assert.Throws<InvalidInputException>(() => Read(text));
        Assert.Equal(
            new[]
            {
                "l.csv:2:2: q = 0.5: expected a finite number from 1 to 1000; q is m1/m2 with the heavier hole first; swap the holes: q = 2 and exchange chi1 and chi2",
                "l.csv:3:7: cores = 0: expected an integer from 1 to 10000000",
                "l.csv:3:8: cluster = gamma: expected a cluster with a profile: alpha, beta",
                "l.csv:3:9: wall_hours = -1: expected a number greater than 0 and at most 10000000",
                "l.csv:3:10: outcome = done: expected completed, failed or partial",
                "l.csv:4:1: run_id = r1: expected a unique run id; it is already used on line 2",
                "l.csv:4:6: level = 25: expected an integer from 0 to 20",
                "l.csv:4:11: t_end = NaN: expected a finite number written with '.' as the decimal point",
                "l.csv:4:13: started = 2026-13-01: expected an ISO 8601 date or time, e.g. 2026-03-14 or 2026-03-14T09:30:00Z",
                "l.csv:5:14: finished = 2026-01-01: expected a time after started",
            },
            error.Problems);
    }

    [Fact]
    public void Missing_required_columns_are_all_named()
    {
        var error = Assert.Throws<InvalidInputException>(() => Read("run_id,q,chi1z,chi2z,omega0,level,cores\nr1,1,0,0,0.02,1,4\n"));
        Assert.Equal(3, error.Problems.Count);
        Assert.Equal("l.csv:1:1: column 'cluster' is missing: expected the columns run_id, q, chi1z, chi2z, omega0, level, cores, cluster, wall_hours, outcome", error.Problems[0]);
    }
}
