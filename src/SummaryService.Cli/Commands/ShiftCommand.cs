using System.CommandLine;
using Spectre.Console;
using SummaryService.Cli.Connection;
using SummaryService.Cli.Parsing;
using SummaryService.Cli.Rendering;
using SummaryService.Contract.V1;

namespace SummaryService.Cli.Commands;

/// <summary>
/// <c>shift</c>: two windows, or two label sets, of one metric side by side. A quantile gets a verdict
/// only where the server calls the shift significant — its two intervals, widened by sampling error, do
/// not overlap — so noise never reads as a regression.
/// </summary>
public static class ShiftCommand
{
    /// <summary>Builds the command.</summary>
    public static Command Create(CommandRunner runner)
    {
        ArgumentNullException.ThrowIfNull(runner);
        var command = new Command("shift", "Compare two windows or two label sets side by side: did the quantiles move beyond their combined error?");
        var metric = CommonOptions.Metric();
        var labels = CommonOptions.Labels("--label", "Label matcher for both sides (name=value); repeat.");
        var aLabels = CommonOptions.Labels("--a-label", "Label matcher for side a only; repeat.");
        var bLabels = CommonOptions.Labels("--b-label", "Label matcher for side b only; repeat.");
        var aWindow = new Option<string>("--a") { Description = "Window of side a, the baseline: a duration (1h) or FROM..TO (3h..1h, ISO 8601 ends).", HelpName = "window", DefaultValueFactory = _ => "2h..1h" };
        var bWindow = new Option<string>("--b") { Description = "Window of side b, compared with a.", HelpName = "window", DefaultValueFactory = _ => "1h..now" };
        var quantiles = CommonOptions.Quantiles("Quantile whose shift is wanted, in [0, 1]; repeat (default .5, .9, .99).");
        var confidence = CommonOptions.Confidence();
        var json = CommonOptions.Json();
        command.Add(metric);
        command.Add(labels);
        command.Add(aLabels);
        command.Add(bLabels);
        command.Add(aWindow);
        command.Add(bWindow);
        command.Add(quantiles);
        command.Add(confidence);
        command.Add(json);
        runner.Bind(command, async run =>
        {
            var p = run.Parse;
            string name = p.GetValue(metric)!;
            string[] shared = p.GetValue(labels) ?? [];
            long now = run.NowMs;
            var request = new CompareRequest
            {
                A = new Side { Selector = Selection.Of(name, [.. shared, .. p.GetValue(aLabels) ?? []], "--a-label"), Window = Read(p.GetValue(aWindow)!, "--a", now) },
                B = new Side { Selector = Selection.Of(name, [.. shared, .. p.GetValue(bLabels) ?? []], "--b-label"), Window = Read(p.GetValue(bWindow)!, "--b", now) },
                Confidence = Selection.Confidence(p.GetValue(confidence)),
            };
            request.Quantiles.Add(Selection.Quantiles(p.GetValue(quantiles)));
            CompareReply reply = await run.Server.Query.CompareAsync(request, ServerConnection.Unary(run.Cancellation));
            if (p.GetValue(json))
            {
                JsonOutput.Write(run.Console, reply);
            }
            else
            {
                Render(run.Console.Out, request, reply);
            }

            if (reply.A.Count == 0 || reply.B.Count == 0)
            {
                run.Console.Error.WriteLine($"side {(reply.A.Count == 0 ? "a" : "b")} holds no values; nothing to compare (check --a / --b and the labels).");
                return ExitCodes.NotFound;
            }

            return ExitCodes.Ok;
        });
        return command;
    }

    private static Window Read(string text, string option, long nowMs) =>
        WindowText.TryParse(text, nowMs, out Window window, out string error) ? window : throw new UsageException($"{option}: {error}");

    private static void Render(IAnsiConsole console, CompareRequest request, CompareReply reply)
    {
        console.Write(new Rule(Markup.Escape(request.A.Selector.Metric)).LeftJustified());
        console.WriteLine($"a: {Figures.Labels(request.A.Selector.MatchLabels)} {WindowCommand.Span(reply.CoveredA)}".Replace("a:  ", "a: ", StringComparison.Ordinal));
        console.WriteLine($"b: {Figures.Labels(request.B.Selector.MatchLabels)} {WindowCommand.Span(reply.CoveredB)}".Replace("b:  ", "b: ", StringComparison.Ordinal));
        var table = new Table().Border(TableBorder.Rounded);
        table.AddColumn(new TableColumn(new Text("statistic")));
        table.AddColumn(new TableColumn(new Text("a")).RightAligned());
        table.AddColumn(new TableColumn(new Text("b")).RightAligned());
        table.AddColumn(new TableColumn(new Text("b − a [interval]")).RightAligned());
        table.AddColumn(new TableColumn(new Text("verdict")));
        Row(table, "count", reply.A.Count.ToString(System.Globalization.CultureInfo.InvariantCulture), reply.B.Count.ToString(System.Globalization.CultureInfo.InvariantCulture), "", "");
        Row(table, "mean", Figures.Of(Mean(reply.A)), Figures.Of(Mean(reply.B)), "", "");
        Row(table, "median", Figures.Of(reply.A.FiveNumber?.Median?.Value), Figures.Of(reply.B.FiveNumber?.Median?.Value), "", "");
        Row(table, "mean − median", Figures.Of(Mean(reply.A) - reply.A.FiveNumber?.Median?.Value), Figures.Of(Mean(reply.B) - reply.B.FiveNumber?.Median?.Value), "", "");
        Row(table, "standard deviation", Figures.Of(reply.A.HasStddev ? reply.A.Stddev : null), Figures.Of(reply.B.HasStddev ? reply.B.Stddev : null), "", "");
        Row(table, "skewness", Figures.Of(reply.A.HasSkewness ? reply.A.Skewness : null), Figures.Of(reply.B.HasSkewness ? reply.B.Skewness : null), "", "");
        foreach (QuantileShift shift in reply.Shifts)
        {
            string verdict = !shift.Significant ? "within error" : shift.Delta > 0 ? "moved up" : "moved down";
            Row(
                table,
                Figures.QuantileName(shift.Q),
                $"{Figures.Of(shift.A)} {Figures.Interval(shift.ALow, shift.AHigh)}",
                $"{Figures.Of(shift.B)} {Figures.Interval(shift.BLow, shift.BHigh)}",
                $"{Figures.Of(shift.Delta)} {Figures.Interval(shift.Low, shift.High)}",
                verdict,
                shift.Significant ? new Style(Color.Yellow, decoration: Decoration.Bold) : new Style(Color.Grey));
        }

        console.Write(table);
        console.WriteLine(BoundText.Shifts(reply.Shifts));
        console.WriteLine($"Kolmogorov–Smirnov distance {Figures.Of(reply.KsDistance)} [{Figures.Of(reply.KsLow)}, {Figures.Of(reply.KsHigh)}] at {Figures.Percent(request.Confidence)} confidence");
        console.WriteLine("A verdict appears only where the quantile's two intervals (rank error plus sampling error) do not overlap.");
    }

    private static double? Mean(Summary s) => s.HasMean ? s.Mean : null;

    private static void Row(Table table, string name, string a, string b, string delta, string verdict, Style? style = null) =>
        table.AddRow(new Text(name), new Text(a), new Text(b), new Text(delta), new Text(verdict, style ?? Style.Plain));
}
