namespace SummaryService.Container.Tests.Support;

/// <summary>Files of this repository, found from the test assembly's folder upwards.</summary>
internal static class RepositoryFiles
{
    /// <summary>The folder holding SummaryService.sln.</summary>
    public static string Root { get; } = FindRoot();

    /// <summary>A path under the repository root.</summary>
    public static string PathOf(params string[] parts) => Path.Combine([Root, .. parts]);

    private static string FindRoot()
    {
        for (var folder = new DirectoryInfo(AppContext.BaseDirectory); folder is not null; folder = folder.Parent)
        {
            if (File.Exists(Path.Combine(folder.FullName, "SummaryService.sln")))
            {
                return folder.FullName;
            }
        }

        throw new InvalidOperationException($"No SummaryService.sln above {AppContext.BaseDirectory}.");
    }
}
