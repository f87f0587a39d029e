using System.CommandLine;
using Spectre.Console;
using SummaryService.Cli.Connection;
using SummaryService.Cli.Rendering;
using SummaryService.Contract.V1;

namespace SummaryService.Cli.Commands;

/// <summary><c>catalogue</c>: the series the server holds, with their counts and the span their buckets cover.</summary>
public static class CatalogueCommand
{
    /// <summary>Builds the command.</summary>
    public static Command Create(CommandRunner runner)
    {
        ArgumentNullException.ThrowIfNull(runner);
        var command = new Command("catalogue", "List the series held: each series, its values, buckets and the span covered.");
        var metric = new Argument<string?>("metric") { Description = "Only this metric; every metric the key may read when left out.", Arity = ArgumentArity.ZeroOrOne };
        var json = CommonOptions.Json();
        command.Add(metric);
        command.Add(json);
        runner.Bind(command, async run =>
        {
            string? name = run.Parse.GetValue(metric);
            if (name is not null && name.StartsWith('-'))
            {
                throw new UsageException($"'{name}' is not an option of catalogue; see --help.");
            }

            CatalogueReply reply = await run.Server.Query.CatalogueAsync(new CatalogueRequest { Metric = name ?? "" }, ServerConnection.Unary(run.Cancellation));
            if (run.Parse.GetValue(json))
            {
                JsonOutput.Write(run.Console, reply);
            }
            else
            {
                var table = new Table().Border(TableBorder.Rounded);
                table.AddColumn(new TableColumn(new Text("series")));
                table.AddColumn(new TableColumn(new Text("values")).RightAligned());
                table.AddColumn(new TableColumn(new Text("buckets")).RightAligned());
                table.AddColumn(new TableColumn(new Text("span (UTC)")));
                foreach (CatalogueEntry entry in reply.Series)
                {
                    table.AddRow(
                        new Text(Figures.Series(entry.Metric, entry.Labels)),
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
        }, new FieldNames(("metric", "the metric")));
        return command;
    }
}
