using Spectre.Console;

namespace SummaryService.Cli;

/// <summary>
/// Where a run reads and writes. Tables go through <see cref="Out"/>; JSON goes to the same stream
/// unformatted, so a test can hand in a recording console and read exactly what a person or a script sees.
/// </summary>
/// <param name="Out">Rendered output (tables, bars, text).</param>
/// <param name="Error">One-line error reports and usage errors.</param>
/// <param name="Input">Standard input when it is redirected (a pipe or a file), for <c>send</c>; null at a terminal.</param>
/// <param name="Environment">Looks up environment variables (SUMMARY_SERVER, SUMMARY_API_KEY).</param>
public sealed record CliConsole(IAnsiConsole Out, TextWriter Error, TextReader? Input, Func<string, string?> Environment)
{
    /// <summary>The process's own console, standard error and environment.</summary>
    public static CliConsole FromProcess() => new(
        AnsiConsole.Create(new AnsiConsoleSettings { Out = new AnsiConsoleOutput(Console.Out) }),
        Console.Error,
        Console.IsInputRedirected ? Console.In : null,
        System.Environment.GetEnvironmentVariable);

    /// <summary>Writes one line as is: no markup, no wrapping (JSON documents, commands to copy).</summary>
    public void WriteRaw(string line)
    {
        Out.Profile.Out.Writer.WriteLine(line);
        Out.Profile.Out.Writer.Flush();
    }
}
