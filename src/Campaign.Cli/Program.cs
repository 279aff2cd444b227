using Campaign.Batch.Local;
using Campaign.Cli;

// The local runner starts this executable again, detached, to supervise each job it runs.
if (args is [LocalSupervisor.Command, var jobFolder])
{
    return LocalSupervisor.Run(jobFolder);
}

return new CampaignApp(Console.Out, Console.Error, TimeProvider.System, Environment.CurrentDirectory).Run(args);
