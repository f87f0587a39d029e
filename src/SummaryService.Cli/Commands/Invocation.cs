using System.CommandLine;
using SummaryService.Cli.Connection;

namespace SummaryService.Cli.Commands;

/// <summary>Everything a command's body needs for one run.</summary>
/// <param name="Parse">The parsed command line.</param>
/// <param name="Console">Where to write.</param>
/// <param name="Server">The connection, opened from --server and --api-key.</param>
/// <param name="Time">The clock relative times are measured from.</param>
/// <param name="Cancellation">Cancelled by Ctrl+C or SIGTERM.</param>
public sealed record Invocation(ParseResult Parse, CliConsole Console, ServerConnection Server, TimeProvider Time, CancellationToken Cancellation)
{
    /// <summary>The client's now in Unix milliseconds, for relative range ends.</summary>
    public long NowMs => Time.GetUtcNow().ToUnixTimeMilliseconds();
}
