using System.Globalization;
using System.Text.Json;

namespace Campaign.Batch.Local;

/// <summary>What the local runner stores for a job (request.json).</summary>
internal sealed record LocalJobRecord(
    string Id,
    string Name,
    string Script,
    string WorkingDirectory,
    int Cores,
    double WallSeconds,
    string OutputPath,
    string ErrorPath,
    Dictionary<string, string> Environment,
    string? AfterAny,
    string? WarningSignal,
    int WarningSeconds,
    double GraceSeconds,
    string SubmittedAt);

/// <summary>How a job ended (exit.json), written once, atomically.</summary>
internal sealed record LocalExitRecord(string State, int? ExitCode, int? Signal, double ElapsedSeconds, string FinishedAt);

/// <summary>The files of one job folder: request.json, supervisor.pid, script.pid, cancel, exit.json.</summary>
internal sealed class LocalJobFiles
{
    private static readonly JsonSerializerOptions Json = new() { WriteIndented = true };

    public LocalJobFiles(string folder) => Folder = folder;

    public string Folder { get; }

    public string RequestPath => Path.Combine(Folder, "request.json");

    public string ExitPath => Path.Combine(Folder, "exit.json");

    public string CancelPath => Path.Combine(Folder, "cancel");

    public string SupervisorPidPath => Path.Combine(Folder, "supervisor.pid");

    public string ScriptPidPath => Path.Combine(Folder, "script.pid");

    public LocalJobRecord ReadRequest() => JsonSerializer.Deserialize<LocalJobRecord>(File.ReadAllText(RequestPath), Json)!;

    public void WriteRequest(LocalJobRecord record) => WriteAtomically(RequestPath, JsonSerializer.Serialize(record, Json));

    public LocalExitRecord? ReadExit() => File.Exists(ExitPath) ? JsonSerializer.Deserialize<LocalExitRecord>(File.ReadAllText(ExitPath), Json) : null;

    /// <summary>Writes exit.json unless it exists (the first writer wins).</summary>
    public void WriteExit(LocalExitRecord record)
    {
        if (!File.Exists(ExitPath))
        {
            WriteAtomically(ExitPath, JsonSerializer.Serialize(record, Json));
        }
    }

    public static void WritePid(string path, int pid, long ticks) =>
        WriteAtomically(path, pid.ToString(CultureInfo.InvariantCulture) + " " + ticks.ToString(CultureInfo.InvariantCulture));

    public static (int Pid, long Ticks)? ReadPid(string path)
    {
        if (!File.Exists(path))
        {
            return null;
        }

        var parts = File.ReadAllText(path).Split(' ', StringSplitOptions.RemoveEmptyEntries);
        return parts.Length == 2 && int.TryParse(parts[0], NumberStyles.None, CultureInfo.InvariantCulture, out var pid)
            && long.TryParse(parts[1], NumberStyles.None, CultureInfo.InvariantCulture, out var ticks)
            ? (pid, ticks)
            : null;
    }

    /// <summary>Writes a file so that readers see the old or the new content, never half of it.</summary>
    public static void WriteAtomically(string path, string text)
    {
        var temporary = path + ".tmp-" + Guid.NewGuid().ToString("N");
        try
        {
            File.WriteAllText(temporary, text);
            File.Move(temporary, path, overwrite: true);
        }
        catch (IOException)
        {
            File.Delete(temporary); // no half-written leftovers (e.g. when the disk is full)
            throw;
        }
    }
}
