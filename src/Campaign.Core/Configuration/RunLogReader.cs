using System.Globalization;
using Campaign.Core.Domain;
using Campaign.Core.Physics;
using Campaign.Core.Text;

namespace Campaign.Core.Configuration;

/// <summary>
/// Reads a run-log file (CSV). Required columns: run_id, q, chi1z, chi2z, omega0, level, cores, cluster,
/// wall_hours, outcome (chi1x, chi1y, chi2x, chi2y may be omitted for aligned runs). Optional: core_hours,
/// t_end, orbits, legs, checkpoint_gb, output_gb, started, finished (ISO 8601). Other columns are ignored.
/// Every problem in every row is reported as "file:line:column: column = value: expected ..."; nothing is
/// returned unless the whole file is valid.
/// </summary>
public static class RunLogReader
{
    /// <summary>Columns every run-log file must have.</summary>
    public static readonly string[] Required = { "run_id", "q", "chi1z", "chi2z", "omega0", "level", "cores", "cluster", "wall_hours", "outcome" };

    /// <summary>The former name of the legs column, still read.</summary>
    public const string FormerLegsColumn = "segments";

    /// <summary>Parses and validates the file text against the known clusters.</summary>
    public static IReadOnlyList<RunLogRow> Read(string text, string source, LengthSettings settings, IReadOnlyCollection<string> knownClusters)
    {
        var table = RowCells.Parse(text, source);

        var missing = Required.Where(c => !table.Has(c)).ToList();
        if (missing.Count > 0)
        {
            throw new InvalidInputException(missing.Select(c => $"{source}:{table.HeaderLine.ToString(CultureInfo.InvariantCulture)}:1: column '{c}' is missing: expected the columns {string.Join(", ", Required)}").ToList());
        }

        if (table.Rows.Count == 0)
        {
            throw new InvalidInputException(new[] { $"{source}:{table.HeaderLine.ToString(CultureInfo.InvariantCulture)}:1: no runs after the header: expected at least one row" });
        }

        var problems = new List<string>();
        var logs = new List<RunLogRow>();
        var extraColumns = table.Header.Where(c => !KnownColumns.Contains(c) && c != FormerLegsColumn).ToList();
        var ids = new Dictionary<string, int>(StringComparer.Ordinal);
        var known = string.Join(", ", knownClusters.Order(StringComparer.Ordinal));
        foreach (var row in table.Rows)
        {
            var cells = new RowCells(table, row, problems);
            var id = cells.Text("run_id") ?? "";
            if (id.Length == 0)
            {
                cells.Problem("run_id", "", "a non-empty run id");
            }
            else if (!ids.TryAdd(id, row.Line))
            {
                cells.Problem("run_id", id, $"a unique run id; it is already used on line {ids[id].ToString(CultureInfo.InvariantCulture)}");
            }

            foreach (var spin in new[] { "chi1z", "chi2z" })
            {
                if (string.IsNullOrWhiteSpace(cells.Text(spin)))
                {
                    cells.Problem(spin, "", "a number from -1 to 1 (required in a run log; write 0 for no spin)");
                }
            }

            var draft = cells.Draft(id);
            draft.Orbits = null; // in a run log, orbits is what was simulated, not an input
            cells.Report(draft.Validate(settings));

            var level = Bounded(cells, "level", cells.Integer("level"), 0, RunSpec.MaximumLevel, required: true);
            var cores = Bounded(cells, "cores", cells.Integer("cores"), 1, RunSpec.MaximumCores, required: true);
            var cluster = cells.Text("cluster") ?? "";
            if (!knownClusters.Contains(cluster))
            {
                cells.Problem("cluster", cluster, $"a cluster with a profile: {known}");
            }

            var wall = Positive(cells, "wall_hours", 1e7, required: true);
            var outcome = (cells.Text("outcome") ?? "") switch
            {
                "completed" => RunOutcome.Completed,
                "failed" => RunOutcome.Failed,
                "partial" => RunOutcome.Partial,
                var other => Wrong(cells, "outcome", other),
            };
            var coreHours = Positive(cells, "core_hours", 1e12);
            var tEnd = Positive(cells, "t_end", 1e9);
            var orbits = Positive(cells, "orbits", 1e5);
            // Logs written before the column got its current name call it "segments".
            var legsColumn = !table.Has("legs") && table.Has(FormerLegsColumn) ? FormerLegsColumn : "legs";
            var legs = Bounded(cells, legsColumn, cells.Integer(legsColumn), 1, 1_000_000, required: false);
            var checkpoint = Positive(cells, "checkpoint_gb", 1e7);
            var output = Positive(cells, "output_gb", 1e9);
            var started = Timestamp(cells, "started");
            var finished = Timestamp(cells, "finished");
            if (started is { } s && finished is { } f && f < s)
            {
                cells.Problem("finished", cells.Text("finished")!, "a time after started");
            }

            if (problems.Count > 0)
            {
                continue;
            }

            var log = new RunLog(id, draft.BuildConfiguration(settings), (int)level!.Value, (int)cores!.Value, cluster, wall!.Value, outcome!.Value,
                coreHours, tEnd, orbits, legs is null ? null : (int)legs.Value, checkpoint, output, started, finished);
            logs.Add(new RunLogRow(row.Line, log, extraColumns.ToDictionary(c => c, c => cells.Text(c) ?? "")));
        }

        if (problems.Count > 0)
        {
            throw new InvalidInputException(problems);
        }

        return logs;
    }

    /// <summary>Every column the reader understands; others are kept as extras.</summary>
    public static readonly string[] KnownColumns =
    {
        "run_id", "q", "chi1x", "chi1y", "chi1z", "chi2x", "chi2y", "chi2z", "omega0", "level", "cores", "cluster", "wall_hours",
        "outcome", "core_hours", "t_end", "orbits", "legs", "checkpoint_gb", "output_gb", "started", "finished",
    };

    private static RunOutcome? Wrong(RowCells cells, string column, string value)
    {
        cells.Problem(column, value, "completed, failed or partial");
        return null;
    }

    private static long? Bounded(RowCells cells, string column, long? value, long min, long max, bool required)
    {
        if (value is null)
        {
            if (required && !cells.HasProblem(column))
            {
                cells.Problem(column, "(missing)", $"an integer from {min.ToString(CultureInfo.InvariantCulture)} to {max.ToString(CultureInfo.InvariantCulture)}");
            }

            return null;
        }

        if (value < min || value > max)
        {
            cells.Problem(column, cells.Text(column)!, $"an integer from {min.ToString(CultureInfo.InvariantCulture)} to {max.ToString(CultureInfo.InvariantCulture)}");
            return null;
        }

        return value;
    }

    private static double? Positive(RowCells cells, string column, double max, bool required = false)
    {
        var value = cells.Number(column);
        if (value is null)
        {
            if (required && !cells.HasProblem(column))
            {
                cells.Problem(column, "(missing)", $"a number greater than 0 and at most {FieldProblem.Show(max)}");
            }

            return null;
        }

        if (!(value > 0 && value <= max))
        {
            cells.Problem(column, cells.Text(column)!, $"a number greater than 0 and at most {FieldProblem.Show(max)}");
            return null;
        }

        return value;
    }

    private static DateTimeOffset? Timestamp(RowCells cells, string column)
    {
        var text = cells.Text(column);
        if (string.IsNullOrEmpty(text))
        {
            return null;
        }

        if (!DateTimeOffset.TryParse(text, CultureInfo.InvariantCulture, DateTimeStyles.AssumeUniversal | DateTimeStyles.AdjustToUniversal, out var value)
            || !(text.Length >= 10 && text[4] == '-' && text[7] == '-'))
        {
            cells.Problem(column, text, "an ISO 8601 date or time, e.g. 2026-03-14 or 2026-03-14T09:30:00Z");
            return null;
        }

        return value;
    }
}

/// <summary>One valid row of a run-log file: its line, the run, and the extra columns kept as they were.</summary>
public sealed record RunLogRow(int Line, RunLog Log, IReadOnlyDictionary<string, string> Extra);
