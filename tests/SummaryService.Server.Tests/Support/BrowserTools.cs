using SummaryService.TestSupport;

namespace SummaryService.Server.Tests.Support;

/// <summary>
/// Makes sure the browser test has what it needs, so that `dotnet test SummaryService.sln` works on
/// a fresh machine as the README promises: the page test's packages from its lock file, and Debian's
/// chromium when the tests run as root (as on this project's machines and in CI). Otherwise the test
/// fails naming the command that fixes it; it never passes silently.
/// </summary>
internal static class BrowserTools
{
    private static readonly Lazy<Task> Ready = new(PrepareAsync);

    public static Task EnsureAsync() => Ready.Value;

    private static async Task PrepareAsync()
    {
        if (!Directory.Exists(Path.Combine(NodeScript.Folder, "node_modules", "playwright-core")))
        {
            await RunAsync("npm", ["ci", "--no-audit", "--no-fund"], NodeScript.Folder, TimeSpan.FromMinutes(5));
        }

        if (!File.Exists("/usr/bin/chromium") && Environment.UserName == "root")
        {
            await RunAsync("apt-get", ["update"], "/", TimeSpan.FromMinutes(10));
            await RunAsync("apt-get", ["install", "-y", "--no-install-recommends", "chromium"], "/", TimeSpan.FromMinutes(20));
        }
    }

    private static Task RunAsync(string command, string[] arguments, string folder, TimeSpan limit) =>
        ChildCommand.RunCheckedAsync(command, arguments, folder, limit, new Dictionary<string, string> { ["DEBIAN_FRONTEND"] = "noninteractive" });
}
