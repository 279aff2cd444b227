// Tracking drives POSIX batch systems and processes: Linux (and other Unix) only.
[assembly: System.Runtime.Versioning.SupportedOSPlatform("linux")]
