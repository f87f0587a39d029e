using System.Diagnostics;

namespace SummaryService.Server.Tests.Support;

/// <summary>Runs a script of tests/SummaryService.Page.Tests under node, bounded in time, and hands back its output.</summary>
internal static class NodeScript
{
    /// <summary>The folder with the page test's package.json (and node_modules after <c>npm ci</c>).</summary>
    public static string Folder => Path.GetFullPath(Path.Combine(AppContext.BaseDirectory, "..", "..", "..", "..", "SummaryService.Page.Tests"));

    public static async Task<(int ExitCode, string Output)> RunAsync(string script, IReadOnlyDictionary<string, string> environment, TimeSpan limit)
    {
        // Missing tools are a failure with a way out, never a silent pass.
        await BrowserTools.EnsureAsync();
        Assert.True(File.Exists("/usr/bin/chromium"), "chromium is missing: run `apt-get install -y chromium` as root (the tests do that themselves when run as root).");
        Assert.True(Directory.Exists(Path.Combine(Folder, "node_modules", "playwright-core")), $"playwright-core is missing: run `npm ci` in {Folder}.");

        var info = new ProcessStartInfo("node") { WorkingDirectory = Folder, RedirectStandardOutput = true, RedirectStandardError = true, UseShellExecute = false };
        info.ArgumentList.Add(script);
        foreach (var (key, value) in environment)
        {
            info.Environment[key] = value;
        }

        using Process process = Process.Start(info) ?? throw new InvalidOperationException("node did not start");
        Task<string> stdout = process.StandardOutput.ReadToEndAsync();
        Task<string> stderr = process.StandardError.ReadToEndAsync();
        using var timeout = new CancellationTokenSource(limit);
        try
        {
            await process.WaitForExitAsync(timeout.Token);
        }
        catch (OperationCanceledException)
        {
            process.Kill(entireProcessTree: true);
            throw new TimeoutException($"{script} ran longer than {limit}:\n{await stderr}");
        }

        return (process.ExitCode, (await stdout) + (await stderr));
    }
}
