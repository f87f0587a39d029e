using System.Diagnostics;
using System.Text;

namespace SummaryService.TestSupport;

/// <summary>What a finished command printed (standard output and error, interleaved as read) and its exit code.</summary>
public sealed record CommandResult(int ExitCode, string Output);

/// <summary>
/// Runs a command to completion within a time limit, capturing what it prints; past the limit its
/// whole process tree is killed and the result says so.
/// </summary>
public static class ChildCommand
{
    /// <summary>Runs <paramref name="command"/> and returns its exit code and output; it never throws for a non-zero exit.</summary>
    public static async Task<CommandResult> RunAsync(string command, IEnumerable<string> arguments, string folder, TimeSpan limit, IReadOnlyDictionary<string, string>? environment = null)
    {
        var info = new ProcessStartInfo(command) { WorkingDirectory = folder, RedirectStandardOutput = true, RedirectStandardError = true, UseShellExecute = false };
        foreach (string argument in arguments)
        {
            info.ArgumentList.Add(argument);
        }

        foreach (var (key, value) in environment ?? new Dictionary<string, string>())
        {
            info.Environment[key] = value;
        }

        var output = new StringBuilder();
        void Append(string? line)
        {
            if (line is not null)
            {
                lock (output)
                {
                    output.AppendLine(line);
                }
            }
        }

        using Process process = Process.Start(info) ?? throw new InvalidOperationException($"{command} did not start");
        process.OutputDataReceived += (_, e) => Append(e.Data);
        process.ErrorDataReceived += (_, e) => Append(e.Data);
        process.BeginOutputReadLine();
        process.BeginErrorReadLine();
        using var timeout = new CancellationTokenSource(limit);
        try
        {
            await process.WaitForExitAsync(timeout.Token).ConfigureAwait(false);
        }
        catch (OperationCanceledException)
        {
            process.Kill(entireProcessTree: true);
            await process.WaitForExitAsync(CancellationToken.None).ConfigureAwait(false);
            Append($"(killed after {limit.TotalSeconds:0} s)");
        }

        lock (output)
        {
            return new CommandResult(process.ExitCode, output.ToString());
        }
    }

    /// <summary>Like <see cref="RunAsync"/>, but a non-zero exit throws with the command line and its output.</summary>
    public static async Task<string> RunCheckedAsync(string command, IReadOnlyList<string> arguments, string folder, TimeSpan limit, IReadOnlyDictionary<string, string>? environment = null)
    {
        CommandResult result = await RunAsync(command, arguments, folder, limit, environment).ConfigureAwait(false);
        return result.ExitCode == 0
            ? result.Output
            : throw new InvalidOperationException($"`{command} {string.Join(' ', arguments)}` exited with {result.ExitCode}:\n{result.Output}");
    }
}
