using Campaign.Core.Configuration;
using Campaign.Core.Domain;
using Campaign.Core.Text;
using Campaign.Store;

namespace Campaign.App.Logs;

/// <summary>Import past runs from a CSV file.</summary>
/// <param name="Workspace">Workspace folder.</param>
/// <param name="Path">The file.</param>
/// <param name="Shown">The file's name as the user gave it (for messages).</param>
/// <param name="Replace">Overwrite stored runs whose id the file repeats.</param>
public sealed record ImportLogsRequest(string Workspace, string Path, string Shown, bool Replace);

/// <summary>What an import did.</summary>
/// <param name="Added">Runs added.</param>
/// <param name="Replaced">Runs replaced.</param>
/// <param name="Total">Runs in the workspace now.</param>
public sealed record ImportLogsResult(int Added, int Replaced, int Total);

/// <summary>The group's past runs: import (all or nothing) and list.</summary>
public sealed class RunLogService
{
    private readonly TimeProvider _time;

    /// <summary>Creates the service.</summary>
    public RunLogService(TimeProvider time) => _time = time;

    /// <summary>Reads, validates and stores a run-log file in one transaction.</summary>
    public ImportLogsResult Import(ImportLogsRequest request)
    {
        var text = InputFile.Read(request.Path, request.Shown, "a run-log file (CSV)");
        using var workspace = Workspace.Open(request.Workspace, _time);
        var rows = RunLogReader.Read(text, request.Shown, workspace.Config.Length, workspace.Clusters.Keys.ToList());
        var result = RunLogStore.Import(workspace.Connection, rows, request.Shown, request.Replace, _time);
        return new ImportLogsResult(result.Added, result.Replaced, RunLogStore.All(workspace.Connection).Count);
    }

    /// <summary>Every stored run.</summary>
    public IReadOnlyList<RunLog> List(string workspaceRoot)
    {
        using var workspace = Workspace.Open(workspaceRoot, _time);
        return RunLogStore.All(workspace.Connection);
    }
}
