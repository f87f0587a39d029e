using System.CommandLine;
using Spectre.Console;
using SummaryService.Cli.Connection;
using SummaryService.Cli.Rendering;
using SummaryService.Contract.V1;

namespace SummaryService.Cli.Commands;

/// <summary><c>catalog</c>: the series the server holds, with their counts and the span their buckets cover.</summary>
public static class CatalogCommand
{
    /// <summary>Builds the command.</summary>
    public static Command Create(CommandRunner runner)
    {
        ArgumentNullException.ThrowIfNull(runner);
        var command = new Command("catalog", "List the series held: metric, labels, values, buckets and the span covered.");
        var metric = new Argument<string?>("metric") { Description = "Only this metric; every metric the key may read when left out.", Arity = ArgumentArity.ZeroOrOne };
        var json = CommonOptions.Json();
        command.Add(metric);
        command.Add(json);
        runner.Bind(command, async run =>
        {
            string? name = run.Parse.GetValue(metric);
            if (name is not null && name.StartsWith('-'))
            {
                throw new UsageException($"'{name}' is not an option of catalog; see --help.");
            }

            ListSeriesReply reply = await run.Server.Admin.ListSeriesAsync(new ListSeriesRequest { Metric = name ?? "" }, ServerConnection.Unary(run.Cancellation));
            if (run.Parse.GetValue(json))
            {
                JsonOutput.Write(run.Console, reply);
            }
            else
            {
                var table = new Table().Border(TableBorder.Rounded);
                table.AddColumn(new TableColumn(new Text("metric")));
                table.AddColumn(new TableColumn(new Text("labels")));
                table.AddColumn(new TableColumn(new Text("values")).RightAligned());
                table.AddColumn(new TableColumn(new Text("buckets")).RightAligned());
                table.AddColumn(new TableColumn(new Text("span")));
                foreach (SeriesEntry entry in reply.Series)
                {
                    table.AddRow(
                        new Text(entry.Metric),
                        new Text(Figures.Labels(entry.Labels)),
                        new Text(entry.Count.ToString(System.Globalization.CultureInfo.InvariantCulture)),
                        new Text(entry.Buckets.ToString(System.Globalization.CultureInfo.InvariantCulture)),
                        new Text(WindowCommand.Span(entry.Extent)));
                }

                run.Console.Out.Write(table);
                run.Console.Out.WriteLine($"{reply.Series.Count} series");
            }

            if (reply.Series.Count == 0)
            {
                run.Console.Error.WriteLine(name is null ? "the server holds no series yet; push some with 'sumq send' or run 'sumq demo'." : $"no series of metric '{name}'.");
                return ExitCodes.NotFound;
            }

            return ExitCodes.Ok;
        });
        return command;
    }
}
