using System.Security.Cryptography;
using System.Text;
using System.Text.RegularExpressions;
using Campaign.Cli.Tests.Support;
using FsCheck;
using FsCheck.Fluent;
using Xunit.Abstractions;

namespace Campaign.Cli.Tests.Reliability;

/// <summary>A demo workspace (small candidate list) shared by the bad-input properties, which never change it.</summary>
public sealed class BadInputWorkspace : IDisposable
{
    public BadInputWorkspace()
    {
        Assert.Equal(0, CliRun.Demo(Folder.Path, "ws").ExitCode);
    }

    public TempFolder Folder { get; } = new();

    public string Ws(string relative = "") => Path.Combine(Folder.Path, "ws", relative);

    /// <summary>What "stored data" means: the database (with its write-ahead log), the config and the profiles.</summary>
    public string Fingerprint()
    {
        var files = new[] { "campaign.db", "campaign.db-wal", "campaign.toml" }.Select(f => Ws(f))
            .Concat(Directory.EnumerateFiles(Ws("clusters")).Order(StringComparer.Ordinal))
            .Where(File.Exists);
        return string.Join(";", files.Select(f => Path.GetFileName(f) + "=" + Convert.ToHexString(SHA256.HashData(File.ReadAllBytes(f)))));
    }

    public void Dispose() => Folder.Dispose();
}

/// <summary>
/// Property-based tests (FsCheck, seeded): malformed run logs, candidate files, workspace configs, cluster
/// profiles and command lines. Every case must end with a located error and a non-zero exit code, and leave the
/// stored data byte-for-byte unchanged; harmless variations (a byte-order mark, CRLF line ends) must not matter.
/// </summary>
[Collection("tracking")]
public sealed class BadInputPropertyTests(BadInputWorkspace workspace, ITestOutputHelper output) : IClassFixture<BadInputWorkspace>
{
    private const int Cases = 150;

    /// <summary>A case: the file's text (or raw bytes), what it is, and the line an error must point at (0: any).</summary>
    public sealed record BadFile(byte[] Bytes, string What, int Line)
    {
        public override string ToString() => $"{What} (line {Line}): {Encoding.UTF8.GetString(Bytes).Replace("\n", "\\n", StringComparison.Ordinal)[..Math.Min(400, Bytes.Length)]}";
    }

    // Values no numeric field accepts, wherever it is and whatever its range.
    private static readonly string[] NotNumbers = { "abc", "NaN", "nan", "Infinity", "-Infinity", "inf", "1e400", "-1e400", "1,5", "0x10", "\uFF12", "1.2.3", "--1", "\u0000", "1 2", "true" };

    // Per column: values out of its range, besides the non-numbers (numeric columns) or instead of them (text columns).
    private static readonly Dictionary<string, string[]> RunLogBad = new(StringComparer.Ordinal)
    {
        ["run_id"] = new[] { "", " " },
        ["q"] = new[] { "", "-1", "0.5", "0", "1e9" },
        ["chi1x"] = new[] { "1.01", "-2" },
        ["chi1z"] = new[] { "", "1.5", "-1.01" },
        ["chi2z"] = new[] { "", "3", "-1.5" },
        ["omega0"] = new[] { "", "-0.01", "0", "7" },
        ["level"] = new[] { "", "-1", "2.5", "21" },
        ["cores"] = new[] { "", "0", "-5", "1.5", "1e12" },
        ["cluster"] = new[] { "", "nowhere", "halyard;gunwale", "../halyard" },
        ["wall_hours"] = new[] { "", "-1", "0" },
        ["outcome"] = new[] { "", "done", "maybe", "1" },
        ["core_hours"] = new[] { "-5" },
        ["t_end"] = new[] { "-10" },
        ["legs"] = new[] { "-1", "1.5" },
    };

    private static readonly HashSet<string> TextColumns = new(StringComparer.Ordinal) { "run_id", "cluster", "outcome", "id" };

    private static readonly Dictionary<string, string[]> CandidateBad = new(StringComparer.Ordinal)
    {
        ["id"] = new[] { "", "--wrap=x", "a b", "../up", "$(x)" },
        ["q"] = new[] { "", "-1", "0.5", "0", "1e9" },
        ["chi1z"] = new[] { "1.5", "-1.01" },
        ["chi2x"] = new[] { "2", "-1.2" },
        ["omega0"] = new[] { "-0.01", "0", "7" },
        ["levels"] = new[] { "x", "1;x", "-1", "99", "1;;2;1.5" },
        ["cores"] = new[] { "0", "-5", "1.5", "1e12" },
        ["value"] = new[] { "-1" },
    };

    private static string Header(string text) => text.Split('\n').First(l => !l.StartsWith('#'));

    /// <summary>Replaces one cell of one data line; returns the new text and the 1-based line of the change.</summary>
    private static (string Text, int Line) ReplaceCell(string text, int dataIndex, string column, string value)
    {
        var lines = text.Split('\n').ToList();
        var header = lines.FindIndex(l => l.Length > 0 && !l.StartsWith('#'));
        var columns = lines[header].Split(',');
        var dataLines = Enumerable.Range(header + 1, lines.Count - header - 1).Where(i => lines[i].Length > 0 && !lines[i].StartsWith('#')).ToList();
        var target = dataLines[dataIndex % dataLines.Count];
        var cells = lines[target].Split(',');
        var index = Array.IndexOf(columns, column);
        var quoted = value.IndexOfAny(new[] { ',', '"', '\n' }) >= 0 ? "\"" + value.Replace("\"", "\"\"", StringComparison.Ordinal) + "\"" : value;
        cells[index] = quoted;
        lines[target] = string.Join(',', cells);
        return (string.Join('\n', lines), target + 1);
    }

    /// <summary>Harmless variations that must not change the outcome (nor the located line).</summary>
    private static Gen<Func<string, byte[]>> Dressing() => Gen.Elements<Func<string, byte[]>>(
        t => Encoding.UTF8.GetBytes(t),
        t => Encoding.UTF8.GetPreamble().Concat(Encoding.UTF8.GetBytes(t)).ToArray(),
        t => Encoding.UTF8.GetBytes(t.Replace("\n", "\r\n", StringComparison.Ordinal)),
        t => Encoding.UTF8.GetPreamble().Concat(Encoding.UTF8.GetBytes(t.Replace("\n", "\r\n", StringComparison.Ordinal))).ToArray());

    /// <summary>Malformed CSV files derived from a valid one.</summary>
    private static Gen<BadFile> BadCsv(string valid, Dictionary<string, string[]> bad, string[] required, IReadOnlyCollection<string> numericOptional)
    {
        var columns = Header(valid).Split(',');
        var headerLine = valid.Split('\n').ToList().FindIndex(l => l.Length > 0 && !l.StartsWith('#')) + 1;
        var cell =
            from column in Gen.Elements(bad.Keys.Where(columns.Contains).Concat(numericOptional.Where(columns.Contains)).Distinct().ToArray())
            from value in Gen.Elements((bad.GetValueOrDefault(column) ?? Array.Empty<string>()).Concat(TextColumns.Contains(column) ? Array.Empty<string>() : NotNumbers).ToArray())
            from row in Gen.Choose(0, 1000)
            from dress in Dressing()
            let change = ReplaceCell(valid, row, column, value)
            select new BadFile(dress(change.Text), $"{column} = '{value}'", change.Line);
        var invalidUtf8 =
            from row in Gen.Choose(0, 1000)
            from column in Gen.Elements(columns)
            from bytes in Gen.Elements(new byte[] { 0xFF }, new byte[] { 0xC3, 0x28 }, new byte[] { 0xE2, 0x82 }, new byte[] { 0x80 })
            let change = ReplaceCell(valid, row, column, "\u0001")
            select new BadFile(Replace(Encoding.UTF8.GetBytes(change.Text), 0x01, bytes), $"invalid UTF-8 in {column}", change.Line);
        var structure = Gen.Elements(
            new BadFile(Array.Empty<byte>(), "empty file", 1),
            new BadFile(Encoding.UTF8.GetPreamble(), "only a byte-order mark", 1),
            new BadFile(Encoding.UTF8.GetBytes("\n\n"), "blank lines only", 0),
            new BadFile(Encoding.UTF8.GetBytes(Header(valid) + "\n"), "a header and no rows", 0),
            new BadFile(new byte[] { 0x00, 0x01, 0x02, 0x7F, 0x1B }, "binary garbage", 1),
            new BadFile(Encoding.UTF8.GetBytes(DropColumn(valid, required[0])), "column " + required[0] + " missing", headerLine),
            new BadFile(Encoding.UTF8.GetBytes(DropColumn(valid, required[^1])), "column " + required[^1] + " missing", headerLine),
            new BadFile(Encoding.UTF8.GetBytes(valid.TrimEnd('\n') + "\n" + "1,2\n"), "a short row", 0),
            new BadFile(Encoding.UTF8.GetBytes(valid.TrimEnd('\n') + "\n\"unterminated,1,2\n"), "an unterminated quote", 0),
            new BadFile(Encoding.UTF8.GetBytes(Header(valid) + "," + columns[1] + "\n"), "a repeated column", 1));
        return Gen.Frequency((6, cell), (1, invalidUtf8), (1, structure));
    }

    private static byte[] Replace(byte[] bytes, byte marker, byte[] with)
    {
        var i = Array.IndexOf(bytes, marker);
        return bytes[..i].Concat(with).Concat(bytes[(i + 1)..]).ToArray();
    }

    private static string DropColumn(string text, string column)
    {
        var lines = text.Split('\n');
        var header = Header(text).Split(',');
        var index = Array.IndexOf(header, column);
        return string.Join('\n', lines.Select(l => l.Length == 0 || l.StartsWith('#') ? l : string.Join(',', l.Split(',').Where((_, i) => i != index))));
    }

    /// <summary>Runs every case; each must fail with exit code 2, name the file and the line, and change nothing.</summary>
    private void Check(Gen<BadFile> cases, string fileName, Func<string, CliRun> command, int seed)
    {
        var before = workspace.Fingerprint();
        var tried = 0;
        var property = Prop.ForAll(Arb.From(cases), bad =>
        {
            tried++;
            var path = Path.Combine(workspace.Folder.Path, fileName);
            File.WriteAllBytes(path, bad.Bytes);
            var run = command(path);
            var location = bad.Line > 0 ? $"{fileName}:{bad.Line}:" : $"{fileName}:";
            var ok = run.ExitCode == 2 && run.Err.Contains(location, StringComparison.Ordinal) && Regex.IsMatch(run.Err, Regex.Escape(fileName) + @":\d+:\d+: ")
                && workspace.Fingerprint() == before;
            if (!ok)
            {
                output.WriteLine($"FAILED {bad}\nexit {run.ExitCode}\n{run.Err}{run.Out[..Math.Min(300, run.Out.Length)]}");
            }

            return ok;
        });
        property.Check(Config.QuickThrowOnFailure.WithMaxTest(Cases).WithReplay((ulong)seed, 0x9E3779B97F4A7C15UL).WithQuietOnSuccess(true));
        output.WriteLine($"{tried} malformed {fileName} files refused with their location; stored data unchanged");
    }

    private string ValidRunLogs()
    {
        // Eight of the demo's runs under new ids, so that the clean file itself would import.
        var lines = File.ReadAllLines(Path.Combine(RepositoryRoot.Path, "demo-campaign", "run-logs.csv")).Take(9).ToList();
        return string.Join('\n', lines.Select((l, i) => i == 0 ? l : "new" + l[2..])) + "\n";
    }

    [Fact]
    public void The_clean_files_behind_the_properties_are_accepted_in_every_harmless_dressing()
    {
        var logs = ValidRunLogs();
        var candidates = File.ReadAllText(CliRun.SmallCandidates);
        foreach (var dress in new Func<string, byte[]>[] { Encoding.UTF8.GetBytes, t => Encoding.UTF8.GetPreamble().Concat(Encoding.UTF8.GetBytes(t.Replace("\n", "\r\n", StringComparison.Ordinal))).ToArray() })
        {
            File.WriteAllBytes(Path.Combine(workspace.Folder.Path, "clean.csv"), dress(candidates));
            var estimate = CliRun.Of(workspace.Folder.Path, "--dir", "ws", "estimate", "clean.csv", "--json");
            Assert.True(estimate.ExitCode == 0, estimate.Err);
            Assert.Equal(43, estimate.Json().GetProperty("runs").GetArrayLength());
        }

        // The run logs would import (checked in a copy, so the shared workspace stays as it is).
        using var copy = new TempFolder();
        Assert.Equal(0, CliRun.Demo(copy.Path, "ws").ExitCode);
        File.WriteAllBytes(Path.Combine(copy.Path, "clean.csv"), Encoding.UTF8.GetPreamble().Concat(Encoding.UTF8.GetBytes(logs.Replace("\n", "\r\n", StringComparison.Ordinal))).ToArray());
        var import = CliRun.Of(copy.Path, "--dir", "ws", "logs", "import", "clean.csv");
        Assert.True(import.ExitCode == 0, import.Err);
        Assert.Contains("8 runs added", import.Out, StringComparison.Ordinal);
    }

    [Fact]
    public void Malformed_run_logs_are_refused_with_their_location_and_store_nothing()
    {
        var cases = BadCsv(ValidRunLogs(), RunLogBad, new[] { "run_id", "outcome" }, new[] { "core_hours", "t_end", "legs", "checkpoint_gb", "output_gb", "chi1x", "chi2y" });
        Check(cases, "bad-logs.csv", path => CliRun.Of(workspace.Folder.Path, "--dir", "ws", "logs", "import", path), seed: 11);
    }

    [Fact]
    public void Malformed_candidate_files_are_refused_by_estimate_and_select_and_store_nothing()
    {
        var valid = File.ReadAllText(CliRun.SmallCandidates);
        var cases = BadCsv(valid, CandidateBad, new[] { "id", "q" }, new[] { "chi1x", "omega0", "orbits", "cores", "value" });
        Check(cases, "bad-candidates.csv", path => CliRun.Of(workspace.Folder.Path, "--dir", "ws", "select", path, "--save"), seed: 12);
        Check(cases, "bad-candidates.csv", path => CliRun.Of(workspace.Folder.Path, "--dir", "ws", "estimate", path), seed: 13);
    }

    /// <summary>Malformed TOML derived from a valid file: wrong types, out-of-range values, syntax errors, missing keys.</summary>
    private static Gen<BadFile> BadToml(string valid, string[] requiredKeys)
    {
        var lines = valid.Split('\n');
        var keyLines = Enumerable.Range(0, lines.Length).Where(i => Regex.IsMatch(lines[i], @"^[a-z_0-9]+ = ")).ToArray();
        var replaced =
            from i in Gen.Elements(keyLines)
            let key = lines[i][..lines[i].IndexOf(' ', StringComparison.Ordinal)]
            let current = Regex.Replace(lines[i][(key.Length + 3)..], @"\s+#.*$", "")
            from value in Gen.Elements(WrongFor(key, current))
            from dress in Dressing()
            let text = string.Join('\n', lines.Select((l, j) => j == i ? $"{key} = {value}" : l))
            select new BadFile(dress(text), $"{key} = {value}", i + 1);
        var syntax =
            from i in Gen.Elements(keyLines)
            from broken in Gen.Elements("= 3", "key = ", "key = \"unterminated", "[unclosed", "key = 1 2", "key == 2", "k\u00e9y = 1")
            select new BadFile(Encoding.UTF8.GetBytes(string.Join('\n', lines.Select((l, j) => j == i ? broken : l))), "syntax: " + broken, i + 1);
        var duplicated =
            from i in Gen.Elements(keyLines)
            select new BadFile(Encoding.UTF8.GetBytes(string.Join('\n', lines.Take(i + 1).Append(lines[i]).Concat(lines.Skip(i + 1)))), "duplicate " + lines[i], i + 2);
        var missing =
            from key in Gen.Elements(requiredKeys)
            select new BadFile(Encoding.UTF8.GetBytes(string.Join('\n', lines.Where(l => !l.StartsWith(key + " =", StringComparison.Ordinal)))), "missing " + key, 0);
        var unknown =
            from i in Gen.Elements(keyLines)
            select new BadFile(Encoding.UTF8.GetBytes(string.Join('\n', lines.Take(i + 1).Append("wall_limit_hour = 3").Concat(lines.Skip(i + 1)))), "unknown key", i + 2);
        return Gen.Frequency((6, replaced), (2, syntax), (1, duplicated), (1, missing), (1, unknown));
    }

    private static string[] WrongFor(string key, string current)
    {
        if (current.StartsWith('"'))
        {
            return new[] { "12", "true", "[1, 2]", "2027-01-01" };
        }

        if (current is "true" or "false")
        {
            return new[] { "\"yes\"", "1", "tru", "[true]" };
        }

        if (current.StartsWith('['))
        {
            return new[] { "12", "\"x\"", "[1, \"a\"]", "true" }.Where(v => !(key == "levels" && v == "12")).ToArray();
        }

        if (Regex.IsMatch(current, @"^\d{4}-\d{2}-\d{2}$"))
        {
            return new[] { "2027-02-30", "\"someday\"", "12", "2027-13-01" };
        }

        return new[] { "\"12\"", "nan", "inf", "-inf", "-1", "1e400", "true", "[1]" };
    }

    [Fact]
    public void Malformed_workspace_configs_are_refused_by_every_command_with_their_location()
    {
        var path = workspace.Ws("campaign.toml");
        var valid = File.ReadAllText(path);
        var cases = BadToml(valid.Replace("\r\n", "\n", StringComparison.Ordinal), new[] { "name", "clusters", "cluster", "amount", "start", "end" });
        try
        {
            // The config is in the workspace: the case is written there, and "unchanged" means the database and profiles.
            var before = DatabaseAndProfiles();
            var tried = 0;
            var property = Prop.ForAll(Arb.From(cases), bad =>
            {
                tried++;
                File.WriteAllBytes(path, bad.Bytes);
                var ok = true;
                foreach (var args in new[] { new[] { "check" }, new[] { "status" }, new[] { "forecast", "--replicas", "10" } })
                {
                    var run = CliRun.Of(workspace.Folder.Path, new[] { "--dir", "ws" }.Concat(args).ToArray());
                    var location = bad.Line > 0 ? $"campaign.toml:{bad.Line}:" : "campaign.toml:";
                    if (run.ExitCode != 2 || !run.Err.Contains(location, StringComparison.Ordinal))
                    {
                        output.WriteLine($"FAILED {bad} with {args[0]}\nexit {run.ExitCode}\n{run.Err}");
                        ok = false;
                    }
                }

                return ok && DatabaseAndProfiles() == before;
            });
            property.Check(Config.QuickThrowOnFailure.WithMaxTest(Cases).WithReplay(14UL, 0x9E3779B97F4A7C15UL).WithQuietOnSuccess(true));
            output.WriteLine($"{tried} malformed campaign.toml refused by check, status and forecast; stored data unchanged");
        }
        finally
        {
            File.WriteAllText(path, valid);
        }
    }

    private string DatabaseAndProfiles() => string.Join(";", workspace.Fingerprint().Split(';').Where(p => !p.StartsWith("campaign.toml", StringComparison.Ordinal)));

    [Fact]
    public void Malformed_cluster_profiles_are_refused_with_their_location()
    {
        var valid = File.ReadAllText(Path.Combine(RepositoryRoot.Path, "cluster-profiles", "halyard.toml"));
        var cases = BadToml(valid, new[] { "name", "batch_system", "cores_per_node", "wall_limit_hours", "charge_whole_nodes" });
        Check(cases, "halyard.toml", path => CliRun.Of(workspace.Folder.Path, "--dir", "ws", "clusters", "check", path), seed: 15);
    }

    [Fact]
    public void Bad_command_lines_are_refused_with_a_usage_or_input_error_and_change_nothing()
    {
        var invocations = new (string[] Command, string Option, string[] Values)[]
        {
            (new[] { "estimate", "candidates.csv" }, "--interval", new[] { "0", "1", "-0.5", "1.5", "NaN", "abc", "" }),
            (new[] { "estimate", "candidates.csv" }, "--samples", new[] { "0", "-5", "abc", "1e99", "2.5" }),
            (new[] { "estimate", "candidates.csv" }, "--checkpoint-margin", new[] { "-1", "NaN", "Infinity", "abc" }),
            (new[] { "select", "candidates.csv", "--save" }, "--quantile", new[] { "0", "1", "1.5", "-0.2", "NaN", "x" }),
            (new[] { "select", "candidates.csv", "--save" }, "--budget", new[] { "-1", "NaN", "Infinity", "abc", "0" }),
            (new[] { "select", "candidates.csv", "--save" }, "--max-runs", new[] { "0", "-1", "x", "1.5" }),
            (new[] { "select", "candidates.csv", "--save" }, "--objective", new[] { "cheapest", "", "COVERAGE" }),
            (new[] { "forecast" }, "--replicas", new[] { "0", "-1", "abc", "1e9" }),
            (new[] { "model", "fit" }, "--folds", new[] { "1", "0", "-3", "abc", "100000" }),
            (new[] { "track", "--on", "workbench" }, "--cores", new[] { "0", "-1", "x" }),
            (new[] { "track" }, "--on", new[] { "nowhere", "", "../x" }),
            (new[] { "status" }, "--events", new[] { "-1", "x" }),
            (new[] { "length", "--q", "2" }, "--omega0", new[] { "-1", "NaN", "abc", "0" }),
            (new[] { "estimate", "candidates.csv" }, "--bogus", new[] { "1" }),
            (new[] { "report", "--out", "never-written" }, "--replicas", new[] { "0", "-4" }),
        };
        var cases =
            from invocation in Gen.Elements(invocations)
            from value in Gen.Elements(invocation.Values)
            select (invocation.Command, invocation.Option, Value: value);
        var before = workspace.Fingerprint();
        var tried = 0;
        var property = Prop.ForAll(Arb.From(cases), c =>
        {
            tried++;
            var args = new[] { "--dir", "ws" }.Concat(c.Command.Select(a => a == "candidates.csv" ? workspace.Ws("candidates.csv") : a)).Concat(new[] { c.Option, c.Value }).ToArray();
            var run = CliRun.Of(workspace.Folder.Path, args);
            var ok = run.ExitCode is 1 or 2 && run.Err.Contains(c.Option, StringComparison.Ordinal) && workspace.Fingerprint() == before;
            if (!ok)
            {
                output.WriteLine($"FAILED campaign {string.Join(' ', args)}\nexit {run.ExitCode}\n{run.Err}");
            }

            return ok;
        });
        property.Check(Config.QuickThrowOnFailure.WithMaxTest(Cases).WithReplay(16UL, 0x9E3779B97F4A7C15UL).WithQuietOnSuccess(true));
        output.WriteLine($"{tried} bad command lines refused; stored data unchanged");
    }
}
