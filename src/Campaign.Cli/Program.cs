using Campaign.Cli;

return new CampaignApp(Console.Out, Console.Error, TimeProvider.System, Environment.CurrentDirectory).Run(args);
