namespace Campaign.Testing;

/// <summary>Finds the repository's root (the folder with Campaign.sln) above the test's output folder.</summary>
public static class RepositoryRoot
{
    public static string Path
    {
        get
        {
            var dir = new DirectoryInfo(AppContext.BaseDirectory);
            while (dir is not null && !File.Exists(System.IO.Path.Combine(dir.FullName, "Campaign.sln")))
            {
                dir = dir.Parent;
            }

            return dir?.FullName ?? throw new InvalidOperationException("Campaign.sln not found above " + AppContext.BaseDirectory);
        }
    }
}
