using System.Globalization;
using Campaign.Core.Domain;
using Campaign.Core.Physics;
using Campaign.Core.Text;

namespace Campaign.Core.Configuration;

/// <summary>
/// Reads a candidate file (CSV): id, q, chi1x..chi2z (x and y may be omitted), omega0 or orbits, levels
/// ("2;3;4"), cores, cluster (one cluster, or several separated by ';' that the configuration may run on),
/// and optional value, must, core_hours. Missing levels, cores and cluster come
/// from the workspace defaults. Every problem in every row is reported as "file:line:column: ..." and
/// nothing is returned unless the whole file is valid.
/// </summary>
public static partial class CandidateReader
{
    /// <summary>Columns the reader understands; others are kept by callers that want them, and ignored here.</summary>
    public static readonly string[] Columns =
    {
        "id", "q", "chi1x", "chi1y", "chi1z", "chi2x", "chi2y", "chi2z", "omega0", "orbits", "levels", "cores",
        "cluster", "value", "must", "core_hours",
    };

    /// <summary>
    /// What a configuration id may be: it becomes part of run ids, run folder names and batch job names, so it
    /// must be safe in all of them (no path separators, no leading '-' or '.', nothing a shell would read).
    /// </summary>
    public const string IdRule = "an id of 1 to 48 characters: letters, digits, '.', '-' or '_', starting with a letter or digit";

    /// <summary>
    /// The longest simulated length (M) a candidate may need: a hundred times the longest runs groups make
    /// (about 1e5 M; order of magnitude from common practice, from memory).
    /// </summary>
    public const double MaximumLength = 10_000_000;

    [System.Text.RegularExpressions.GeneratedRegex("^[A-Za-z0-9][A-Za-z0-9._-]{0,47}\\z")]
    private static partial System.Text.RegularExpressions.Regex IdPattern();

    /// <summary>Parses and validates the file text.</summary>
    public static IReadOnlyList<Candidate> Read(string text, string source, LengthSettings settings, RunDefaults defaults, string defaultCluster, IReadOnlyCollection<string> knownClusters)
    {
        var table = RowCells.Parse(text, source);

        var problems = new List<string>();
        foreach (var required in new[] { "id", "q" })
        {
            if (!table.Has(required))
            {
                problems.Add($"{source}:{table.HeaderLine.ToString(CultureInfo.InvariantCulture)}:1: column '{required}' is missing: expected a header with at least id, q and omega0 or orbits");
            }
        }

        if (!table.Has("omega0") && !table.Has("orbits"))
        {
            problems.Add($"{source}:{table.HeaderLine.ToString(CultureInfo.InvariantCulture)}:1: neither 'omega0' nor 'orbits' is a column: expected one of them");
        }

        if (table.Rows.Count == 0)
        {
            problems.Add($"{source}:{table.HeaderLine.ToString(CultureInfo.InvariantCulture)}:1: no configurations after the header: expected at least one row");
        }

        if (problems.Count > 0)
        {
            throw new InvalidInputException(problems);
        }

        var candidates = new List<Candidate>();
        var ids = new Dictionary<string, int>(StringComparer.Ordinal);
        foreach (var row in table.Rows)
        {
            var cells = new RowCells(table, row, problems);
            var id = cells.Text("id");
            if (string.IsNullOrWhiteSpace(id))
            {
                cells.Problem("id", id ?? "", "a non-empty identifier");
            }
            else if (!IdPattern().IsMatch(id))
            {
                cells.Problem("id", id, IdRule);
            }
            else if (!ids.TryAdd(id, row.Line))
            {
                cells.Problem("id", id, $"a unique id; it is already used on line {ids[id].ToString(CultureInfo.InvariantCulture)}");
            }

            var draft = cells.Draft(id ?? "");
            draft.Cores = cells.Integer("cores") ?? defaults.Cores;
            var levels = cells.Levels("levels");
            draft.Levels.AddRange(levels ?? defaults.Levels.Select(l => (long)l));
            var clusters = (cells.Text("cluster") ?? "").Split(';', StringSplitOptions.TrimEntries | StringSplitOptions.RemoveEmptyEntries).Distinct().ToList();
            if (clusters.Count == 0)
            {
                clusters.Add(defaultCluster);
            }

            foreach (var unknown in clusters.Where(m => !knownClusters.Contains(m)))
            {
                cells.Problem("cluster", cells.Text("cluster") ?? "", $"clusters with a profile, separated by ';': {string.Join(", ", knownClusters.Order(StringComparer.Ordinal))} (\"{unknown}\" has none)");
            }

            var value = cells.Number("value") ?? 1.0;
            if (!(double.IsFinite(value) && value >= 0 && value <= 1e9))
            {
                cells.Problem("value", cells.Text("value") ?? "", "a weight from 0 to 1e9");
            }

            var must = cells.Boolean("must") ?? false;
            var coreHours = cells.Number("core_hours");
            if (coreHours is { } ch && !(double.IsFinite(ch) && ch > 0 && ch <= 1e12))
            {
                cells.Problem("core_hours", cells.Text("core_hours") ?? "", "a cost in core-hours greater than 0 and at most 1e12");
            }

            cells.Report(draft.Validate(settings, includeRunFields: true));

            if (problems.Count > 0)
            {
                continue;
            }

            try
            {
                var spec = draft.BuildRunSpec(settings);
                var total = Physics.SimulatedLength.Estimate(spec.Configuration, settings).Total;
                if (!(total <= MaximumLength))
                {
                    // Far beyond any run a group can afford; the cost arithmetic would overflow long before.
                    var column = table.Has("omega0") && cells.Text("omega0") is { Length: > 0 } ? "omega0" : "orbits";
                    cells.Problem(column, cells.Text(column) ?? "", $"a run of at most {MaximumLength.ToString("N0", CultureInfo.InvariantCulture)} M (this one would last {total.ToString("0.##E+0", CultureInfo.InvariantCulture)} M): start closer to merger");
                    continue;
                }

                candidates.Add(new Candidate(id!, spec, clusters[0], value, must, coreHours, clusters));
            }
            catch (InvalidInputException e)
            {
                foreach (var message in e.Problems)
                {
                    problems.Add($"{source}:{row.Line.ToString(CultureInfo.InvariantCulture)}:1: {message}");
                }
            }
        }

        if (problems.Count > 0)
        {
            throw new InvalidInputException(problems);
        }

        return candidates;
    }
}
