// Batch systems and the local runner use POSIX processes and signals: Linux (and other Unix) only.
[assembly: System.Runtime.Versioning.SupportedOSPlatform("linux")]
