using System.CommandLine;
using Google.Protobuf.WellKnownTypes;
using Grpc.Core;
using Spectre.Console;
using Spectre.Console.Rendering;
using SummaryService.Cli.Parsing;
using SummaryService.Cli.Connection;
using SummaryService.Cli.Rendering;
using SummaryService.Readable;
using SummaryService.Contract.V1;

namespace SummaryService.Cli.Commands;

/// <summary>
/// <c>follow</c>: the trailing window's figures, refreshed in place every interval until Ctrl+C or
/// <c>--count</c> updates. Where the output is not an interactive terminal each update is printed
/// below the last, so a pipe or a log keeps every one.
/// </summary>
public static class FollowCommand
{
    /// <summary>Builds the command.</summary>
    public static Command Create(CommandRunner runner)
    {
        ArgumentNullException.ThrowIfNull(runner);
        var command = new Command("follow", "Live view of a trailing window, refreshed every interval until Ctrl+C (or --count updates).");
        var metric = CommonOptions.Metric();
        var labels = CommonOptions.Labels();
        var groupBy = CommonOptions.GroupBy();
        var last = new Option<string>("--last") { Description = "Length of the trailing window, measured back from each update.", HelpName = "duration", DefaultValueFactory = _ => "5m" };
        var every = new Option<string>("--every") { Description = "Time between updates (at least 100ms).", HelpName = "duration", DefaultValueFactory = _ => "2s" };
        // No short form: -n means "a number of lines" or "dry run" in common tools.
        var count = new Option<uint>("--count") { Description = "Stop after this many updates; 0 runs until Ctrl+C.", DefaultValueFactory = _ => 0 };
        var quantiles = CommonOptions.Quantiles("Quantile shown, in [0, 1]; repeat (default .5, .9, .99).");
        var confidence = CommonOptions.Confidence();
        var json = CommonOptions.Json();
        json.Description = "Print each update as one JSON document per line.";
        command.Add(metric);
        command.Add(labels);
        command.Add(groupBy);
        command.Add(last);
        command.Add(every);
        command.Add(count);
        command.Add(quantiles);
        command.Add(confidence);
        command.Add(json);
        runner.Bind(command, async run =>
        {
            var p = run.Parse;
            TimeSpan window = DurationText.TryParse(p.GetValue(last)!, out TimeSpan w, out string error) ? w : throw new UsageException($"--last: {error}");
            TimeSpan interval = DurationText.TryParse(p.GetValue(every)!, out TimeSpan i, out error) ? i : throw new UsageException($"--every: {error}");
            if (interval < TimeSpan.FromMilliseconds(100))
            {
                throw new UsageException($"--every {p.GetValue(every)} is below 100ms, the shortest interval the server allows.");
            }

            double[] asked = Selection.Quantiles(p.GetValue(quantiles));
            var query = new SummarizeRequest
            {
                Selector = Selection.Of(p.GetValue(metric)!, p.GetValue(labels)),
                Window = Windows.Last(window),
                Confidence = Selection.Confidence(p.GetValue(confidence)),
            };
            query.Quantiles.Add(asked.Length == 0 ? [0.5, 0.9, 0.99] : asked);
            query.GroupBy.Add(p.GetValue(groupBy) ?? []);
            var request = new WatchRequest { Query = query, Interval = Duration.FromTimeSpan(interval), MaxUpdates = p.GetValue(count) };
            using var call = run.Server.Query.Watch(request, cancellationToken: run.Cancellation);
            bool asJson = p.GetValue(json);
            string title = $"{Figures.Series(query.Selector.Metric, query.Selector.LabelEquals)}, last {DurationText.Format(window)}, every {DurationText.Format(interval)}";
            IAnsiConsole console = run.Console.Out;
            int updates = 0;
            if (!asJson && console.Profile.Capabilities.Interactive && console.Profile.Capabilities.Ansi)
            {
                await console.Live(new Text("waiting for the first update…")).StartAsync(async live =>
                {
                    await foreach (SummarizeReply reply in call.ResponseStream.ReadAllAsync(run.Cancellation))
                    {
                        live.UpdateTarget(View(title, ++updates, run.Time, reply));
                        live.Refresh();
                    }
                });
            }
            else
            {
                await foreach (SummarizeReply reply in call.ResponseStream.ReadAllAsync(run.Cancellation))
                {
                    updates++;
                    if (asJson)
                    {
                        JsonOutput.Write(run.Console, reply);
                    }
                    else
                    {
                        console.Write(View(title, updates, run.Time, reply));
                    }
                }
            }

            return ExitCodes.Ok;
        }, Fields);
        return command;
    }

    /// <summary>The server's fields as this command's options (a watch repeats a query, whose fields carry "query.").</summary>
    public static FieldNames Fields { get; } = CommonOptions.QueryFields.With(
        ("query.selector.metric", "the metric"),
        ("query.window.last", "--last"),
        ("query.window", "--last"),
        ("interval", "--every"),
        ("max_updates", "--count"));

    private static IRenderable View(string title, int update, TimeProvider time, SummarizeReply reply)
    {
        var table = new Table().Border(TableBorder.Rounded).Title(Markup.Escape(title));
        table.Caption(Markup.Escape($"update {update} at {TimePoint.Format(time.GetUtcNow().ToUnixTimeMilliseconds())}, covering {WindowCommand.Span(reply.Covered)}; Ctrl+C stops"));
        table.AddColumn(new TableColumn(new Text("group")));
        table.AddColumn(new TableColumn(new Text("count")).RightAligned());
        table.AddColumn(new TableColumn(new Text("mean [interval]")).RightAligned());
        table.AddColumn(new TableColumn(new Text("skewness")).RightAligned());
        var quantiles = reply.Groups.FirstOrDefault()?.Summary.Quantiles ?? [];
        foreach (QuantileEstimate q in quantiles)
        {
            table.AddColumn(new TableColumn(new Text($"{Figures.QuantileName(q.Q)} [interval]")).RightAligned());
        }

        foreach (GroupSummary group in reply.Groups)
        {
            Summary s = group.Summary;
            var cells = new List<Text>
            {
                new(Figures.Labels(group.Labels) is { Length: > 0 } l ? l : "all"),
                new(s.Count.ToString(System.Globalization.CultureInfo.InvariantCulture)),
                new($"{Figures.Of(s.HasMean ? s.Mean : null)} {Figures.Interval(s.HasMeanLow ? s.MeanLow : null, s.HasMeanHigh ? s.MeanHigh : null)}"),
                new(Figures.Of(s.HasSkewness ? s.Skewness : null)),
            };
            cells.AddRange(s.Quantiles.Select(q => new Text($"{Figures.Of(q.Value)} {Figures.Interval(q.Low, q.High)}")));
            while (cells.Count < table.Columns.Count)
            {
                cells.Add(new Text("—"));
            }

            table.AddRow(cells);
        }

        return table;
    }
}
