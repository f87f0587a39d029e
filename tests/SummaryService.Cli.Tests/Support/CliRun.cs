using Google.Protobuf;
using Spectre.Console;
using Spectre.Console.Testing;
using SummaryService.Cli;

namespace SummaryService.Cli.Tests.Support;

/// <summary>What one run of the tool printed and returned.</summary>
public sealed record CliResult(int ExitCode, string Out, string Error)
{
    /// <summary>Standard output's lines, without the empty ones.</summary>
    public string[] Lines => Out.Split('\n', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries);

    /// <summary>The single JSON document a --json run printed, parsed as <typeparamref name="T"/>.</summary>
    public T Json<T>()
        where T : IMessage<T>, new()
    {
        Assert.True(ExitCode == 0, $"exit {ExitCode}: {Error}");
        return JsonParser.Default.Parse<T>(Assert.Single(Lines));
    }
}

/// <summary>Runs the tool in process through <see cref="CliApp.RunAsync(string[], CliConsole, CancellationToken)"/>, with a recording console.</summary>
public static class CliRun
{
    /// <summary>
    /// Runs <paramref name="args"/>; <paramref name="stdin"/> stands for piped standard input, <paramref name="environment"/>
    /// for the process environment; with <paramref name="colours"/> the output keeps its ANSI colour codes.
    /// </summary>
    public static async Task<CliResult> RunAsync(IEnumerable<string> args, string? stdin = null, IReadOnlyDictionary<string, string>? environment = null, CancellationToken cancellationToken = default, bool colours = false)
    {
        using var console = new TestConsole();
        console.Width(220);
        if (colours)
        {
            console.Colors(ColorSystem.Standard).SupportsAnsi(true).EmitAnsiSequences();
        }

        using var error = new StringWriter();
        var cli = new CliConsole(console, error, stdin is null ? null : new StringReader(stdin), name => environment is not null && environment.TryGetValue(name, out string? v) ? v : null);
        using var limit = CancellationTokenSource.CreateLinkedTokenSource(cancellationToken);
        limit.CancelAfter(TimeSpan.FromSeconds(60)); // no run may hang the suite
        int code = await CliApp.RunAsync([.. args], cli, limit.Token);
        return new CliResult(code, console.Output, error.ToString());
    }

    /// <summary>Runs against <paramref name="server"/>.</summary>
    public static Task<CliResult> AgainstAsync(Uri server, params string[] args) => RunAsync([.. args, "--server", server.ToString()]);
}
