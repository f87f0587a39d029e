using System.Diagnostics;

namespace SummaryService.Cluster.Tests.Support;

/// <summary>
/// Runs a program of the machine's PostgreSQL or Redis install and waits for it, bounded. As root,
/// PostgreSQL's programs run as the <c>postgres</c> account (the server refuses to run as root).
/// </summary>
internal static class LocalCommand
{
    public static bool IsRoot => Environment.UserName == "root";

    /// <summary>Runs the program to its end; fails with its output when it fails or overruns.</summary>
    public static async Task RunAsync(string program, IEnumerable<string> arguments, bool asPostgres = false, int timeoutSeconds = 60)
    {
        using Process process = Start(program, arguments, asPostgres);
        Task<string> output = process.StandardOutput.ReadToEndAsync();
        Task<string> errors = process.StandardError.ReadToEndAsync();
        using var limit = new CancellationTokenSource(TimeSpan.FromSeconds(timeoutSeconds));
        try
        {
            await process.WaitForExitAsync(limit.Token);
        }
        catch (OperationCanceledException)
        {
            process.Kill(entireProcessTree: true);
            throw new TimeoutException($"{program} did not finish within {timeoutSeconds} s: {await errors}");
        }

        if (process.ExitCode != 0)
        {
            throw new InvalidOperationException($"{program} {string.Join(' ', arguments)} failed with exit code {process.ExitCode}: {await output}{await errors}");
        }
    }

    /// <summary>Starts the program with its output redirected.</summary>
    public static Process Start(string program, IEnumerable<string> arguments, bool asPostgres = false)
    {
        var info = new ProcessStartInfo(asPostgres && IsRoot ? "runuser" : program)
        {
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
        };
        if (asPostgres && IsRoot)
        {
            foreach (string part in new[] { "-u", "postgres", "--", program })
            {
                info.ArgumentList.Add(part);
            }
        }

        foreach (string argument in arguments)
        {
            info.ArgumentList.Add(argument);
        }

        return Process.Start(info) ?? throw new InvalidOperationException($"{program} did not start.");
    }
}
