using System.CommandLine;
using SummaryService.Cli.Parsing;
using SummaryService.Readable;
using SummaryService.Contract.V1;

namespace SummaryService.Cli.Commands;

/// <summary>
/// <c>--last</c>, or <c>--from</c>/<c>--to</c>, on a command: the trailing window by default, an explicit
/// range when either end is given. A duration is always a length (<c>--last 1h</c>); an end is an
/// instant (<c>now</c>, <c>now-1h</c>, or ISO 8601), as everywhere else on the command line.
/// </summary>
public sealed class WindowOptions
{
    /// <summary>Adds the three options to <paramref name="command"/>.</summary>
    public WindowOptions(Command command, string defaultLast)
    {
        ArgumentNullException.ThrowIfNull(command);
        Last = new Option<string>("--last")
        {
            Description = "Length of the trailing window ending now (90s, 15m, 6h, 7d).",
            HelpName = "duration",
            DefaultValueFactory = _ => defaultLast,
        };
        From = new Option<string?>("--from")
        {
            Description = "Start of an explicit range: now-3h (three hours ago) or ISO 8601 (2026-12-02T01:00:00Z, UTC without offset).",
            HelpName = "time",
        };
        To = new Option<string?>("--to")
        {
            Description = "End of the range (exclusive); 'now' when left out.",
            HelpName = "time",
        };
        command.Add(Last);
        command.Add(From);
        command.Add(To);
    }

    /// <summary>--last.</summary>
    public Option<string> Last { get; }

    /// <summary>--from.</summary>
    public Option<string?> From { get; }

    /// <summary>--to.</summary>
    public Option<string?> To { get; }

    /// <summary>The window the options describe, relative ends measured back from <paramref name="nowMs"/>.</summary>
    public Window Read(ParseResult parse, long nowMs)
    {
        ArgumentNullException.ThrowIfNull(parse);
        string? from = parse.GetValue(From);
        string? to = parse.GetValue(To);
        if (from is null && to is null)
        {
            string last = parse.GetValue(Last)!;
            return DurationText.TryParse(last, out TimeSpan span, out string error) ? Windows.Last(span) : throw new UsageException($"--last: {error}");
        }

        if (from is null)
        {
            throw new UsageException("--to needs --from: give the start of the range too.");
        }

        long start = TimePoint.TryParse(from, nowMs, out long f, out string fromError) ? f : throw new UsageException($"--from: {fromError}");
        long end = TimePoint.TryParse(to ?? "now", nowMs, out long t, out string toError) ? t : throw new UsageException($"--to: {toError}");
        return Windows.TryRange(start, end, $"--from {from} --to {to ?? "now"}", out Window window, out string rangeError) ? window : throw new UsageException(rangeError);
    }
}
