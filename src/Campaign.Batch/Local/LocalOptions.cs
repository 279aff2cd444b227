namespace Campaign.Batch.Local;

/// <summary>How to start the supervisor process: an executable and the arguments before the job folder.</summary>
/// <param name="FileName">Executable (for example the campaign command, or the dotnet host).</param>
/// <param name="Arguments">Arguments before the job folder; they end with <see cref="LocalSupervisor.Command"/>.</param>
public sealed record SupervisorCommand(string FileName, IReadOnlyList<string> Arguments);

/// <summary>Settings of the local runner.</summary>
/// <param name="Root">Folder for its state (one sub-folder per job); kept across restarts.</param>
/// <param name="Cores">Cores it may use at once (its slots); jobs wait while they do not fit.</param>
/// <param name="Supervisor">How to start the supervisor of each job.</param>
/// <param name="GracePeriod">Time between SIGTERM and SIGKILL at the limit or on cancel.</param>
public sealed record LocalOptions(string Root, int Cores, SupervisorCommand Supervisor, TimeSpan GracePeriod)
{
    /// <summary>With the default grace period of 10 s.</summary>
    public LocalOptions(string root, int cores, SupervisorCommand supervisor)
        : this(root, cores, supervisor, TimeSpan.FromSeconds(10))
    {
    }
}
