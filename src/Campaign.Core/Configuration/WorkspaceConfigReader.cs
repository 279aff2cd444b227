using Campaign.Core.Domain;
using Campaign.Core.Physics;
using Campaign.Core.Text;

namespace Campaign.Core.Configuration;

/// <summary>Reads and validates a workspace config (campaign.toml) from TOML text.</summary>
public static class WorkspaceConfigReader
{
    /// <summary>
    /// Parses and validates against the cluster profiles the workspace knows; throws
    /// <see cref="InvalidInputException"/> listing every located problem.
    /// </summary>
    public static WorkspaceConfig Read(string text, string source, IReadOnlyCollection<string> knownClusters)
    {
        var root = TomlFields.Parse(text, source);

        var problems = new List<string>();
        var notices = new List<string>();
        var top = new TomlFields(root, source, problems);
        top.RejectUnknown("campaign", "allocation", "defaults", "length", "selection", "tracking");
        var known = knownClusters.Count == 0 ? "(no cluster profiles found)" : string.Join(", ", knownClusters.Order(StringComparer.Ordinal));

        var campaign = top.SubTable("campaign", required: true);
        string name = "";
        var clusters = new List<string>();
        var defaultCluster = "";
        if (campaign is not null)
        {
            var fields = new TomlFields(campaign, source, problems);
            fields.Former("machines", "clusters", notices);
            fields.Former("default_machine", "default_cluster", notices);
            fields.RejectUnknown("name", "clusters", "default_cluster");
            name = fields.String("name", true, "the campaign's name, a non-empty string") ?? "";
            if (campaign.Contains("name") && string.IsNullOrWhiteSpace(name))
            {
                fields.Problem("name", "the campaign's name, a non-empty string");
            }

            clusters = fields.StringList("clusters", true)?.ToList() ?? new List<string>();
            if (campaign.Contains("clusters"))
            {
                if (clusters.Count == 0)
                {
                    fields.Problem("clusters", "at least one cluster, one of the profiles: " + known);
                }

                foreach (var unknown in clusters.Where(m => !knownClusters.Contains(m)))
                {
                    fields.Problem("clusters", $"cluster names with a profile; \"{unknown}\" has none (known: {known})");
                }

                if (clusters.Distinct(StringComparer.Ordinal).Count() != clusters.Count)
                {
                    fields.Problem("clusters", "each cluster listed once");
                }
            }

            defaultCluster = fields.String("default_cluster", false) ?? clusters.FirstOrDefault() ?? "";
            if (campaign.Contains("default_cluster") && !clusters.Contains(defaultCluster))
            {
                fields.Problem("default_cluster", "one of campaign.clusters: " + string.Join(", ", clusters));
            }
        }

        var allocations = new List<Allocation>();
        foreach (var table in top.TableList("allocation"))
        {
            new TomlFields(table, source, problems).Former("machine", "cluster", notices);
            var allocation = ReadAllocation(table, source, problems, clusters);
            if (allocation is not null)
            {
                allocations.Add(allocation);
            }
        }

        foreach (var group in allocations.GroupBy(a => a.Cluster))
        {
            var ordered = group.OrderBy(a => a.Start).ToList();
            for (var i = 1; i < ordered.Count; i++)
            {
                if (ordered[i].Start <= ordered[i - 1].End)
                {
                    problems.Add($"{source}: allocations for cluster \"{group.Key}\" overlap ({ordered[i - 1].Start:yyyy-MM-dd} to {ordered[i - 1].End:yyyy-MM-dd} and {ordered[i].Start:yyyy-MM-dd} to {ordered[i].End:yyyy-MM-dd}): expected periods that do not overlap");
                }
            }
        }

        var defaults = new RunDefaults(new[] { 1, 2, 3 }, null);
        var defaultsTable = top.SubTable("defaults", false);
        if (defaultsTable is not null)
        {
            var fields = new TomlFields(defaultsTable, source, problems);
            fields.RejectUnknown("levels", "cores");
            var levels = fields.IntegerList("levels", false, 0, RunSpec.MaximumLevel);
            if (levels is not null && (levels.Count == 0 || levels.Distinct().Count() != levels.Count))
            {
                fields.Problem("levels", "a non-empty array of distinct resolution levels");
            }

            var cores = fields.Integer("cores", false, 1, RunSpec.MaximumCores);
            defaults = new RunDefaults(levels?.Select(l => (int)l).ToArray() ?? defaults.Levels, cores is null ? null : (int)cores.Value);
        }

        var length = ReadLength(top.SubTable("length", false), source, problems);
        var space = ReadSelection(top.SubTable("selection", false), source, problems);
        var trackingTable = top.SubTable("tracking", false);
        if (trackingTable is not null)
        {
            new TomlFields(trackingTable, source, problems).Former("segment_minutes", "leg_minutes", notices);
        }

        var tracking = ReadTracking(trackingTable, source, problems);
        if (problems.Count > 0)
        {
            throw new InvalidInputException(problems);
        }

        return new WorkspaceConfig(name, clusters, defaultCluster, allocations, defaults, length, space, tracking) { Notices = notices };
    }

    private static Allocation? ReadAllocation(TomlTable table, string source, List<string> problems, IReadOnlyList<string> clusters)
    {
        var before = problems.Count;
        var fields = new TomlFields(table, source, problems);
        fields.RejectUnknown("cluster", "amount", "unit", "start", "end", "window");
        var cluster = fields.String("cluster", true, "one of campaign.clusters");
        if (cluster is not null && !clusters.Contains(cluster))
        {
            fields.Problem("cluster", "one of campaign.clusters: " + string.Join(", ", clusters));
        }

        var amount = fields.Amount("amount", true, 1e12);
        var unit = fields.Choice("unit", true, "core-hours", "node-hours");
        var start = fields.Date("start", true);
        var end = fields.Date("end", true);
        if (start is not null && end is not null && end <= start)
        {
            fields.Problem("end", $"a date after start = {start:yyyy-MM-dd}");
        }

        var windows = new List<AllocationWindow>();
        foreach (var windowTable in fields.TableList("window"))
        {
            var w = new TomlFields(windowTable, source, problems);
            w.RejectUnknown("start", "end", "amount");
            var ws = w.Date("start", true);
            var we = w.Date("end", true);
            var wa = w.Amount("amount", true, 1e12);
            if (ws is null || we is null || wa is null)
            {
                continue;
            }

            if (we < ws)
            {
                w.Problem("end", $"a date on or after start = {ws:yyyy-MM-dd}");
            }
            else if (start is not null && end is not null && (ws < start || we > end))
            {
                w.Problem("start", $"a window inside the allocation period {start:yyyy-MM-dd} to {end:yyyy-MM-dd}");
            }
            else if (windows.Count > 0 && ws <= windows[^1].End)
            {
                w.Problem("start", $"windows in date order that do not overlap; the previous window ends {windows[^1].End:yyyy-MM-dd}");
            }

            windows.Add(new AllocationWindow(ws.Value, we.Value, wa.Value));
        }

        if (amount is not null && windows.Sum(w => w.Amount) > amount.Value * (1 + 1e-12))
        {
            fields.Problem("amount", $"at least the sum of its windows, {FieldProblem.Show(windows.Sum(w => w.Amount))}");
        }

        if (problems.Count > before)
        {
            return null;
        }

        return new Allocation(cluster!, amount!.Value, unit == "node-hours" ? AllocationUnit.NodeHours : AllocationUnit.CoreHours, start!.Value, end!.Value, windows);
    }

    private static Tracking.TrackingSettings ReadTracking(TomlTable? table, string source, List<string> problems)
    {
        var settings = new Tracking.TrackingSettings();
        if (table is null)
        {
            return settings;
        }

        var f = new TomlFields(table, source, problems);
        f.RejectUnknown(
            "runs_folder", "script", "leg_minutes", "warning_signal", "warning_seconds", "checkpoint_pattern", "checkpoint_marker",
            "checkpoint_settle_seconds", "checkpoint_checksum", "progress_file", "progress_regex", "done_marker", "retry_limit",
            "failures_without_progress", "stall_minutes", "growth_window", "growth_rate_limit", "reserve_core_hours", "prequeue",
            "notify_command", "reconcile_seconds");
        settings = new Tracking.TrackingSettings
        {
            RunsFolder = f.String("runs_folder", false) ?? settings.RunsFolder,
            Script = f.String("script", false) ?? settings.Script,
            LegMinutes = f.FiniteNumber("leg_minutes") ?? settings.LegMinutes,
            WarningSignal = f.String("warning_signal", false) ?? settings.WarningSignal,
            WarningSeconds = (int)(f.Integer("warning_seconds", false, 0, 86_400) ?? settings.WarningSeconds),
            CheckpointPattern = f.String("checkpoint_pattern", false) ?? settings.CheckpointPattern,
            CheckpointMarker = f.String("checkpoint_marker", false) ?? settings.CheckpointMarker,
            CheckpointSettleSeconds = f.FiniteNumber("checkpoint_settle_seconds") ?? settings.CheckpointSettleSeconds,
            CheckpointChecksum = f.Boolean("checkpoint_checksum", false) ?? settings.CheckpointChecksum,
            ProgressFile = f.String("progress_file", false) ?? settings.ProgressFile,
            ProgressRegex = f.String("progress_regex", false) ?? settings.ProgressRegex,
            DoneMarker = f.String("done_marker", false) ?? settings.DoneMarker,
            RetryLimit = (int)(f.Integer("retry_limit", false, 0, 100) ?? settings.RetryLimit),
            FailuresWithoutProgress = (int)(f.Integer("failures_without_progress", false, 1, 100) ?? settings.FailuresWithoutProgress),
            StallMinutes = f.FiniteNumber("stall_minutes") ?? settings.StallMinutes,
            GrowthWindow = (int)(f.Integer("growth_window", false, 3, 100_000) ?? settings.GrowthWindow),
            GrowthRateLimit = f.FiniteNumber("growth_rate_limit") ?? settings.GrowthRateLimit,
            ReserveCoreHours = f.FiniteNumber("reserve_core_hours") ?? settings.ReserveCoreHours,
            Prequeue = f.Boolean("prequeue", false) ?? settings.Prequeue,
            NotifyCommand = f.StringList("notify_command", false) ?? settings.NotifyCommand,
            ReconcileSeconds = f.FiniteNumber("reconcile_seconds") ?? settings.ReconcileSeconds,
        };
        if (table.Contains("progress_regex") && settings.ProgressRegex.Length > 0)
        {
            try
            {
                _ = new System.Text.RegularExpressions.Regex(settings.ProgressRegex);
                if (!settings.ProgressRegex.Contains("(?<t>", StringComparison.Ordinal))
                {
                    f.Problem("progress_regex", "a regular expression with a named group (?<t>...) for the simulated time");
                }
            }
            catch (ArgumentException e)
            {
                f.Problem("progress_regex", "a valid regular expression (" + e.Message + ")");
            }
        }

        foreach (var problem in settings.Validate())
        {
            f.Problem(problem.Field, problem.Expected);
        }

        return settings;
    }

    private static Selection.ParameterSpace ReadSelection(TomlTable? table, string source, List<string> problems)
    {
        var space = Selection.ParameterSpace.Default;
        if (table is null)
        {
            return space;
        }

        var fields = new TomlFields(table, source, problems);
        string[] keys = { "ln_q_scale", "chi1z_scale", "chi2z_scale", "chi1_inplane_scale", "chi2_inplane_scale" };
        fields.RejectUnknown(keys);
        space = new Selection.ParameterSpace(
            fields.FiniteNumber(keys[0]) ?? space.LnQScale,
            fields.FiniteNumber(keys[1]) ?? space.Chi1zScale,
            fields.FiniteNumber(keys[2]) ?? space.Chi2zScale,
            fields.FiniteNumber(keys[3]) ?? space.Chi1InPlaneScale,
            fields.FiniteNumber(keys[4]) ?? space.Chi2InPlaneScale);
        foreach (var problem in space.Validate())
        {
            fields.Problem(problem.Field, problem.Expected);
        }

        return space;
    }

    private static LengthSettings ReadLength(TomlTable? table, string source, List<string> problems)
    {
        var settings = new LengthSettings();
        if (table is null)
        {
            return settings;
        }

        var fields = new TomlFields(table, source, problems);
        string[] keys = { "end_of_inspiral_x", "merger_allowance_m", "minimum_post_peak_m", "ringdown_efolds", "extraction_radius_m" };
        fields.RejectUnknown(keys);
        double Read(string key, double fallback) => fields.FiniteNumber(key) ?? fallback;
        settings = new LengthSettings
        {
            EndOfInspiralX = Read(keys[0], settings.EndOfInspiralX),
            MergerAllowance = Read(keys[1], settings.MergerAllowance),
            MinimumPostPeak = Read(keys[2], settings.MinimumPostPeak),
            RingdownEFolds = Read(keys[3], settings.RingdownEFolds),
            ExtractionRadius = Read(keys[4], settings.ExtractionRadius),
        };
        foreach (var problem in settings.Validate())
        {
            fields.Problem(problem.Field, problem.Expected);
        }

        return settings;
    }
}
