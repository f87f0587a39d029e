using System.CommandLine;
using Spectre.Console;
using SummaryService.Cli.Connection;
using SummaryService.Cli.Parsing;
using SummaryService.Cli.Rendering;
using SummaryService.Contract.V1;

namespace SummaryService.Cli.Commands;

/// <summary><c>window</c>: one window's whole summary, every statistic with its interval, and a text histogram.</summary>
public static class WindowCommand
{
    /// <summary>Builds the command.</summary>
    public static Command Create(CommandRunner runner)
    {
        ArgumentNullException.ThrowIfNull(runner);
        var command = new Command("window", "Summarize one window: centre, spread, shape, quantiles, modes and a histogram, each with its interval.");
        var metric = CommonOptions.Metric();
        var labels = CommonOptions.Labels();
        var groupBy = CommonOptions.GroupBy();
        var quantiles = CommonOptions.Quantiles("Quantile to estimate, in [0, 1]; repeat (default 0, .25, .5, .75, .9, .99, 1).");
        var confidence = CommonOptions.Confidence();
        var rankOf = new Option<double[]>("--share-below") { Description = "Threshold whose share of values at or below is wanted (e.g. an SLO of 300); repeat.", HelpName = "value" };
        var bins = new Option<uint>("--bins") { Description = "Histogram bins over [min, max]; 0 for none.", DefaultValueFactory = _ => 12 };
        var modes = new Option<uint>("--modes") { Description = "Most modes listed.", DefaultValueFactory = _ => 5 };
        var json = CommonOptions.Json();
        command.Add(metric);
        command.Add(labels);
        command.Add(groupBy);
        var window = new WindowOptions(command, "1h");
        command.Add(quantiles);
        command.Add(confidence);
        command.Add(rankOf);
        command.Add(bins);
        command.Add(modes);
        command.Add(json);
        runner.Bind(command, async run =>
        {
            var p = run.Parse;
            var request = new SummarizeRequest
            {
                Selector = Selection.Of(p.GetValue(metric)!, p.GetValue(labels)),
                Window = window.Read(p, run.NowMs),
                Confidence = Selection.Confidence(p.GetValue(confidence)),
                MaxModes = Math.Max(1, p.GetValue(modes)),
            };
            request.Quantiles.Add(Selection.Quantiles(p.GetValue(quantiles)));
            request.GroupBy.Add(p.GetValue(groupBy) ?? []);
            request.RankOf.Add(p.GetValue(rankOf) ?? []);
            if (p.GetValue(bins) is uint binCount and > 0)
            {
                request.Histogram = new HistogramSpec { BinCount = binCount };
            }

            SummarizeReply reply = await run.Server.Query.SummarizeAsync(request, ServerConnection.Unary(run.Cancellation));
            if (p.GetValue(json))
            {
                JsonOutput.Write(run.Console, reply);
            }
            else
            {
                Render(run.Console.Out, request.Selector, reply);
            }

            return Empty(run.Console, reply);
        }, Fields);
        return command;
    }

    /// <summary>The server's fields as this command's options.</summary>
    public static FieldNames Fields { get; } = CommonOptions.QueryFields.With(
        ("rank_of", "--share-below"),
        ("histogram.bin_count", "--bins"),
        ("histogram", "--bins"),
        ("max_modes", "--modes"));

    /// <summary>Writes each group's table and histogram under a heading naming its series and the covered span.</summary>
    public static void Render(IAnsiConsole console, Selector selector, SummarizeReply reply)
    {
        ArgumentNullException.ThrowIfNull(console);
        ArgumentNullException.ThrowIfNull(selector);
        ArgumentNullException.ThrowIfNull(reply);
        foreach (GroupSummary group in reply.Groups)
        {
            console.Write(new Rule(Markup.Escape(Figures.Series(selector.Metric, selector.LabelEquals, group.Labels))).LeftJustified());
            console.WriteLine($"{group.SeriesMerged} series merged, covering {Span(reply.Covered)}");
            console.Write(SummaryTable.Of(group.Summary));
            if (SummaryTable.Histogram(group.Summary) is { } histogram)
            {
                console.WriteLine("histogram (estimated count per bin, its interval in grey):");
                console.Write(histogram);
            }

            console.WriteLine();
        }
    }

    /// <summary>A covered span as from → to (UTC).</summary>
    public static string Span(TimeRange? range) =>
        range is null ? "nothing" : $"{TimePoint.Format(range.FromUnixMs)} → {TimePoint.Format(range.ToUnixMs)}";

    /// <summary>Exit code 4 with a line on standard error when the window holds no values.</summary>
    public static int Empty(CliConsole console, SummarizeReply reply)
    {
        ArgumentNullException.ThrowIfNull(console);
        ArgumentNullException.ThrowIfNull(reply);
        if (reply.Groups.Any(g => g.Summary.Count > 0))
        {
            return ExitCodes.Ok;
        }

        console.Error.WriteLine($"no values in the window ({Span(reply.Covered)}); widen it with --last or --from.");
        return ExitCodes.NotFound;
    }
}
