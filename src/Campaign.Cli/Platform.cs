// The command runs batch jobs through POSIX processes and signals: Linux (and other Unix) only.
[assembly: System.Runtime.Versioning.SupportedOSPlatform("linux")]
