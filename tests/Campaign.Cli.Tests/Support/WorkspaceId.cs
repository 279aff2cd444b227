using Microsoft.Data.Sqlite;

namespace Campaign.Cli.Tests.Support;

/// <summary>The workspace id a workspace's job names carry, read from its database.</summary>
public static class WorkspaceId
{
    public static string Of(string workspaceFolder)
    {
        using var connection = new SqliteConnection($"Data Source={Path.Combine(workspaceFolder, "campaign.db")};Mode=ReadOnly;Pooling=False");
        connection.Open();
        using var command = connection.CreateCommand();
        command.CommandText = "SELECT value FROM workspace_info WHERE key = 'workspace_id'";
        return (string)command.ExecuteScalar()!;
    }

    /// <summary>The job name of a run's leg in that workspace.</summary>
    public static string JobName(string workspaceFolder, string runId, int leg) => Campaign.Batch.JobName.For(Of(workspaceFolder), runId, leg);
}
