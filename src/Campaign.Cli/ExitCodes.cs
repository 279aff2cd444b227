namespace Campaign.Cli;

/// <summary>Process exit codes of campaign (documented in docs/cli.md).</summary>
public static class ExitCodes
{
    /// <summary>Success.</summary>
    public const int Ok = 0;

    /// <summary>The command line was wrong (unknown command or option, missing or malformed argument).</summary>
    public const int Usage = 1;

    /// <summary>Input data was wrong (a file, a config, a profile, an option value out of range); nothing was changed.</summary>
    public const int BadInput = 2;

    /// <summary>Something failed at run time (file system, database, a newer schema, an external command).</summary>
    public const int RuntimeFailure = 3;
}
