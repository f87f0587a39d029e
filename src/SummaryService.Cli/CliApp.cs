using System.CommandLine;
using SummaryService.Cli.Commands;

namespace SummaryService.Cli;

/// <summary>
/// The whole tool behind one entry point, so tests run it in process with a recording console and
/// their own cancellation exactly as <c>Program</c> runs it for a person.
/// </summary>
public static class CliApp
{
    /// <summary>The command name people type.</summary>
    public const string Name = "sumq";

    /// <summary>Parses <paramref name="args"/>, runs the command and returns the exit code (see <see cref="ExitCodes"/>).</summary>
    public static Task<int> RunAsync(string[] args, CliConsole console, CancellationToken cancellationToken) =>
        RunAsync(args, console, TimeProvider.System, cancellationToken);

    /// <summary>As <see cref="RunAsync(string[], CliConsole, CancellationToken)"/> with the clock relative times are read against.</summary>
    public static async Task<int> RunAsync(string[] args, CliConsole console, TimeProvider time, CancellationToken cancellationToken)
    {
        ArgumentNullException.ThrowIfNull(args);
        ArgumentNullException.ThrowIfNull(console);
        RootCommand root = Build(console, time);
        ParseResult parse = root.Parse(args);
        var configuration = new InvocationConfiguration
        {
            Output = new SpectreWriter(console),
            Error = console.Error,
            // Program owns Ctrl+C and SIGTERM and cancels the token; the parser must not install its own.
            ProcessTerminationTimeout = null,
        };
        return await parse.InvokeAsync(configuration, cancellationToken).ConfigureAwait(false);
    }

    private static RootCommand Build(CliConsole console, TimeProvider time)
    {
        var common = new CommonOptions(console.Environment);
        var runner = new CommandRunner(console, common, time);
        var root = new RootCommand("sumq — query, watch, compare and feed a SummaryService from the terminal.");
        root.Add(common.Server);
        root.Add(common.ApiKey);
        root.Add(WindowCommand.Create(runner));
        root.Add(TrendCommand.Create(runner));
        root.Add(FollowCommand.Create(runner));
        root.Add(ShiftCommand.Create(runner));
        root.Add(StandoutCommand.Create(runner));
        root.Add(SendCommand.Create(runner));
        root.Add(CatalogueCommand.Create(runner));
        root.Add(HoldingsCommand.Create(runner));
        root.Add(SnapshotCommand.Create(runner));
        root.Add(DemoCommand.Create(runner, common));
        return root;
    }
}
