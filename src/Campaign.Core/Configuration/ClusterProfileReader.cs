using System.Text.RegularExpressions;
using Campaign.Core.Domain;
using Campaign.Core.Text;

namespace Campaign.Core.Configuration;

/// <summary>Reads and validates a cluster profile from TOML text.</summary>
public static partial class ClusterProfileReader
{
    /// <summary>Fields a profile may have, in the order the docs list them.</summary>
    public static readonly string[] Fields =
    {
        "name", "description", "batch_system", "cores_per_node", "memory_per_node_gb", "wall_limit_hours",
        "charge_whole_nodes", "charge_factor", "relative_speed", "max_jobs_queued", "max_jobs_running",
        "queue_wait_median_hours", "queue_wait_p90_hours", "partition", "account",
        "site", "login_host", "run_root", "ssh_config", "requires_master",
    };

    /// <summary>Allowed login hosts: what the error message says.</summary>
    public const string HostRule = "a Host name from your OpenSSH configuration, or user@host: 1 to 255 letters, digits, '.', '-', '_', ':' or '@', not starting with '-'";

    /// <summary>Allowed remote run roots: what the error message says.</summary>
    public const string RunRootRule = "an absolute folder on the remote site (starting with '/'), without control characters";

    /// <summary>Allowed partition (queue) and account names: what the error message says.</summary>
    public const string SiteNameRule = "1 to 64 characters: letters, digits, '.', '-' or '_', starting with a letter or digit";

    /// <summary>Allowed cluster names: what the error message says.</summary>
    public const string NameRule = "a name of 1 to 32 characters: lower-case letters, digits, '-' or '_', starting with a letter";

    /// <summary>Parses and validates; throws <see cref="InvalidInputException"/> listing every located problem.</summary>
    public static ClusterProfile Read(string text, string source)
    {
        var root = TomlFields.Parse(text, source);

        var problems = new List<string>();
        var fields = new TomlFields(root, source, problems);
        fields.RejectUnknown(Fields);
        var name = fields.String("name", required: true, NameRule);
        if (name is not null && !NamePattern().IsMatch(name))
        {
            fields.Problem("name", NameRule);
        }

        var description = fields.String("description", required: false) ?? "";
        var batch = fields.Choice("batch_system", true, "local", "slurm", "pbs");
        var coresPerNode = fields.Integer("cores_per_node", true, 1, 100_000);
        var memory = fields.PositiveNumber("memory_per_node_gb", true, 1_000_000, "GB");
        var wall = fields.PositiveNumber("wall_limit_hours", true, 8760, "hours");
        var wholeNodes = fields.Boolean("charge_whole_nodes", true);
        var chargeFactor = fields.PositiveNumber("charge_factor", false, 1000) ?? 1.0;
        var speed = fields.PositiveNumber("relative_speed", false, 1000) ?? 1.0;
        var queued = fields.Integer("max_jobs_queued", false, 1, 1_000_000) ?? 100;
        var running = fields.Integer("max_jobs_running", false, 1, 1_000_000) ?? queued;
        var waitMedian = fields.Number("queue_wait_median_hours", false, 0, 8760, "hours") ?? 2.0;
        var waitP90 = fields.Number("queue_wait_p90_hours", false, 0, 8760, "hours") ?? Math.Max(waitMedian * 4, waitMedian);
        string? SiteName(string field)
        {
            var value = fields.String(field, required: false);
            if (value is not null && !SiteNamePattern().IsMatch(value))
            {
                fields.Problem(field, SiteNameRule);
                return null;
            }

            return value;
        }

        var partition = SiteName("partition");
        var account = SiteName("account");
        var remote = Remote(fields, source, name);
        if (running > queued)
        {
            fields.Problem("max_jobs_running", $"at most max_jobs_queued = {queued}");
        }

        if (waitP90 < waitMedian)
        {
            fields.Problem("queue_wait_p90_hours", $"at least queue_wait_median_hours = {FieldProblem.Show(waitMedian)}");
        }

        if (problems.Count > 0)
        {
            throw new InvalidInputException(problems);
        }

        var kind = batch switch
        {
            "slurm" => BatchSystemKind.Slurm,
            "pbs" => BatchSystemKind.Pbs,
            _ => BatchSystemKind.Local,
        };
        return new ClusterProfile(name!, description, kind, (int)coresPerNode!.Value, memory!.Value, wall!.Value, wholeNodes!.Value,
            chargeFactor, speed, (int)queued, (int)running, waitMedian, waitP90, partition, account, remote);
    }

    private static RemoteAccess? Remote(TomlFields fields, string source, string? name)
    {
        var site = fields.String("site", required: false);
        var host = fields.String("login_host", required: false, HostRule);
        if (host is not null && !HostPattern().IsMatch(host))
        {
            fields.Problem("login_host", HostRule);
            host = null;
        }

        var root = fields.String("run_root", required: host is not null && fields.Table.Contains("login_host"), RunRootRule);
        if (root is not null && (!root.StartsWith('/') || root.Any(char.IsControl)))
        {
            fields.Problem("run_root", RunRootRule);
            root = null;
        }

        var config = fields.String("ssh_config", required: false, "a path to an OpenSSH configuration file");
        var master = fields.Boolean("requires_master", required: false);
        if (!fields.Table.Contains("login_host"))
        {
            foreach (var field in new[] { "run_root", "ssh_config", "requires_master" }.Where(fields.Table.Contains))
            {
                fields.Problem(field, "only with login_host (a cluster reached over SSH); remove it, or add login_host");
            }

            return null;
        }

        if (host is null || root is null)
        {
            return null;
        }

        if (config is not null)
        {
            // The reader is pure: "~/" and a relative path are resolved where the profile is used.
            config = config.Trim();
        }

        return new RemoteAccess(host, root.Length > 1 ? root.TrimEnd('/') : root, config, master ?? false, site ?? host);
    }

    /// <summary>True when <paramref name="name"/> is a valid cluster name.</summary>
    public static bool IsValidName(string name) => NamePattern().IsMatch(name);

    [GeneratedRegex("^[A-Za-z0-9_][A-Za-z0-9._:@-]{0,254}\\z")]
    private static partial Regex HostPattern();

    [GeneratedRegex("^[A-Za-z0-9][A-Za-z0-9._-]{0,63}\\z")]
    private static partial Regex SiteNamePattern();

    [GeneratedRegex("^[a-z][a-z0-9_-]{0,31}\\z")]
    private static partial Regex NamePattern();
}
