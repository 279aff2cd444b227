using Campaign.Batch.Local;
using Campaign.Cli;

// The local runner starts this executable again, detached, to supervise each job it runs.
if (args is [LocalSupervisor.Command, var jobFolder])
{
    return LocalSupervisor.Run(jobFolder);
}

// The demo payload, started by the demo's batch script (CAMPAIGN_EXE __demo-payload) in a run folder.
if (args is [Campaign.Cli.Payload.DemoPayload.Command, .. var rest])
{
    return Campaign.Cli.Payload.DemoPayload.Run(rest.Length > 0 ? rest[0] : Environment.CurrentDirectory);
}

return new CampaignApp(Console.Out, Console.Error, TimeProvider.System, Environment.CurrentDirectory).Run(args);
