using System.CommandLine;
using Google.Protobuf.WellKnownTypes;
using Spectre.Console;
using SummaryService.Cli.Connection;
using SummaryService.Cli.Parsing;
using SummaryService.Cli.Rendering;
using SummaryService.Readable;
using SummaryService.Contract.V1;

namespace SummaryService.Cli.Commands;

/// <summary><c>trend</c>: one summary per step across a window, as a table and a sparkline of one chosen quantile.</summary>
public static class TrendCommand
{
    /// <summary>Builds the command.</summary>
    public static Command Create(CommandRunner runner)
    {
        ArgumentNullException.ThrowIfNull(runner);
        var command = new Command("trend", "Figures per step across a window: count, mean and quantiles per step, and a sparkline of one quantile.");
        var metric = CommonOptions.Metric();
        var labels = CommonOptions.Labels();
        var groupBy = CommonOptions.GroupBy();
        var step = new Option<string>("--step") { Description = "Length of each step (10s, 5m, 1h).", HelpName = "duration", DefaultValueFactory = _ => "5m" };
        var quantiles = CommonOptions.Quantiles("Quantile per step, in [0, 1]; repeat (default .5, .9, .99).");
        var plot = new Option<double?>("--plot") { Description = "Quantile the sparkline draws (default the last --quantile).", HelpName = "q" };
        var confidence = CommonOptions.Confidence();
        var json = CommonOptions.Json();
        command.Add(metric);
        command.Add(labels);
        command.Add(groupBy);
        var window = new WindowOptions(command, "1h");
        command.Add(step);
        command.Add(quantiles);
        command.Add(plot);
        command.Add(confidence);
        command.Add(json);
        runner.Bind(command, async run =>
        {
            var p = run.Parse;
            TimeSpan width = DurationText.TryParse(p.GetValue(step)!, out TimeSpan s, out string error) ? s : throw new UsageException($"--step: {error}");
            double[] asked = Selection.Quantiles(p.GetValue(quantiles));
            double[] qs = asked.Length == 0 ? [0.5, 0.9, 0.99] : asked;
            double plotted = p.GetValue(plot) ?? qs[^1];
            if (!qs.Contains(plotted))
            {
                throw new UsageException($"--plot {plotted} is not among the quantiles asked for ({string.Join(", ", qs)}); add it with --quantile.");
            }

            var request = new TimelineRequest
            {
                Selector = Selection.Of(p.GetValue(metric)!, p.GetValue(labels)),
                Window = window.Read(p, run.NowMs),
                Step = Duration.FromTimeSpan(width),
                Confidence = Selection.Confidence(p.GetValue(confidence)),
            };
            request.Quantiles.Add(qs);
            request.GroupBy.Add(p.GetValue(groupBy) ?? []);
            TimelineReply reply = await run.Server.Query.TimelineAsync(request, ServerConnection.Unary(run.Cancellation));
            if (p.GetValue(json))
            {
                JsonOutput.Write(run.Console, reply);
            }
            else
            {
                Render(run.Console.Out, request.Selector, qs, plotted, reply);
            }

            if (reply.Steps.All(entry => entry.Groups.Count == 0))
            {
                run.Console.Error.WriteLine("no values in any step of the window; widen it with --last or --from.");
                return ExitCodes.NotFound;
            }

            return ExitCodes.Ok;
        }, CommonOptions.QueryFields.With(("step", "--step")));
        return command;
    }

    private static void Render(IAnsiConsole console, Selector selector, double[] quantiles, double plotted, TimelineReply reply)
    {
        var groups = reply.Steps.SelectMany(p => p.Groups).Select(g => g.Labels).DistinctBy(Figures.Labels, StringComparer.Ordinal).OrderBy(Figures.Labels, StringComparer.Ordinal).ToArray();
        foreach (var groupLabels in groups)
        {
            string group = Figures.Labels(groupLabels);
            console.Write(new Rule(Markup.Escape(Figures.Series(selector.Metric, selector.LabelEquals, groupLabels))).LeftJustified());
            var table = new Table().Border(TableBorder.Rounded);
            table.AddColumn(new TableColumn(new Text("step start")));
            table.AddColumn(new TableColumn(new Text("count")).RightAligned());
            table.AddColumn(new TableColumn(new Text("mean")).RightAligned());
            foreach (double q in quantiles)
            {
                table.AddColumn(new TableColumn(new Text($"{Figures.QuantileName(q)} [interval]")).RightAligned());
            }

            var line = new List<double?>();
            foreach (TimelineStep point in reply.Steps)
            {
                GroupSummary? found = point.Groups.FirstOrDefault(g => Figures.Labels(g.Labels) == group);
                var cells = new List<Text> { new(TimePoint.Format(point.Step.FromUnixMs).Replace("T", " ", StringComparison.Ordinal)) };
                if (found is null)
                {
                    cells.Add(new Text("0"));
                    cells.AddRange(Enumerable.Repeat(new Text("—"), quantiles.Length + 1));
                    line.Add(null);
                }
                else
                {
                    Summary s = found.Summary;
                    cells.Add(new Text(s.Count.ToString(System.Globalization.CultureInfo.InvariantCulture)));
                    cells.Add(new Text(Figures.Of(s.HasMean ? s.Mean : null)));
                    cells.AddRange(s.Quantiles.Select(q => new Text($"{Figures.Of(q.Value)} {Figures.Interval(q.Low, q.High)}")));
                    line.Add(s.Quantiles.FirstOrDefault(q => q.Q == plotted)?.Value);
                }

                table.AddRow(cells);
            }

            console.Write(table);
            double?[] values = [.. line];
            var known = values.OfType<double>().ToArray();
            string scale = known.Length == 0 ? "" : $"  ({Figures.Of(known.Min())} … {Figures.Of(known.Max())})";
            console.WriteLine($"{Figures.QuantileName(plotted)} per step: {Bars.Sparkline(values)}{scale}");
            console.WriteLine();
        }
    }
}
