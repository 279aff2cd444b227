// Campaign runs on Linux (POSIX processes and signals); so do its tests.
[assembly: System.Runtime.Versioning.SupportedOSPlatform("linux")]
