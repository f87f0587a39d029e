using System.CommandLine;
using Spectre.Console;
using SummaryService.Cli.Connection;
using SummaryService.Cli.Parsing;
using SummaryService.Cli.Rendering;
using SummaryService.Contract.V1;

namespace SummaryService.Cli.Commands;

/// <summary>
/// <c>shift</c>: two windows, or two label sets, of one metric side by side. A quantile is called
/// "moved" only where the server calls the shift significant — its two intervals, widened by sampling
/// error, do not overlap. Elsewhere the comparison is inconclusive, which is not "no change": the
/// ratio of the point estimates stays in full view, so a several-fold move the data cannot yet
/// confirm is never dimmed or read as calm.
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
        var aWindow = new Option<string>("--a") { Description = "Window of side a, the baseline: a length (1h: the last hour) or FROM..TO (now-3h..now-1h, ISO 8601 ends).", HelpName = "window", DefaultValueFactory = _ => DefaultA };
        var bWindow = new Option<string>("--b") { Description = "Window of side b, compared with a; same forms as --a.", HelpName = "window", DefaultValueFactory = _ => DefaultB };
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
        }, Fields);
        return command;
    }

    /// <summary>The baseline when --a is left out: the hour before the last.</summary>
    public const string DefaultA = "now-2h..now-1h";

    /// <summary>The side compared when --b is left out: the last hour.</summary>
    public const string DefaultB = "now-1h..now";

    /// <summary>The wording of a shift whose two intervals overlap, on two lines so a narrow terminal keeps it whole.</summary>
    public const string Inconclusive = "inconclusive:\nintervals overlap";

    /// <summary>The server's fields as this command's options.</summary>
    public static FieldNames Fields { get; } = new(
        ("a.selector.metric", "the metric"),
        ("b.selector.metric", "the metric"),
        ("a.selector", "side a (--label, --a-label)"),
        ("b.selector", "side b (--label, --b-label)"),
        ("a.window", "--a"),
        ("b.window", "--b"),
        ("a.window.range", "--a"),
        ("b.window.range", "--b"),
        ("a.window.last", "--a"),
        ("b.window.last", "--b"),
        ("quantiles", "--quantile #{n}"),
        ("confidence", "--confidence"));

    private static Window Read(string text, string option, long nowMs) =>
        WindowText.TryParse(text, nowMs, out Window window, out string error) ? window : throw new UsageException($"{option}: {error}");

    private static void Render(IAnsiConsole console, CompareRequest request, CompareReply reply)
    {
        console.Write(new Rule(Markup.Escape(request.A.Selector.Metric)).LeftJustified());
        console.WriteLine($"a: {Figures.Series(request.A.Selector.Metric, request.A.Selector.LabelEquals)}, {WindowCommand.Span(reply.CoveredA)}");
        console.WriteLine($"b: {Figures.Series(request.B.Selector.Metric, request.B.Selector.LabelEquals)}, {WindowCommand.Span(reply.CoveredB)}");
        var table = new Table().Border(TableBorder.Rounded);
        table.AddColumn(new TableColumn(new Text("statistic")));
        table.AddColumn(new TableColumn(new Text("a")).RightAligned());
        table.AddColumn(new TableColumn(new Text("b")).RightAligned());
        table.AddColumn(new TableColumn(new Text("b − a [interval]")).RightAligned());
        table.AddColumn(new TableColumn(new Text("b / a")).RightAligned().NoWrap());
        table.AddColumn(new TableColumn(new Text("verdict")).NoWrap()); // two short lines, never cut mid-word on a narrow terminal
        Row(table, "count", reply.A.Count.ToString(System.Globalization.CultureInfo.InvariantCulture), reply.B.Count.ToString(System.Globalization.CultureInfo.InvariantCulture), "", "", "");
        Row(table, "mean", Figures.Of(Mean(reply.A)), Figures.Of(Mean(reply.B)), "", "", "");
        Row(table, "median", Figures.Of(reply.A.FiveNumber?.Median?.Value), Figures.Of(reply.B.FiveNumber?.Median?.Value), "", "", "");
        Row(table, "mean − median", Figures.Of(Mean(reply.A) - reply.A.FiveNumber?.Median?.Value), Figures.Of(Mean(reply.B) - reply.B.FiveNumber?.Median?.Value), "", "", "");
        Row(table, "standard deviation", Figures.Of(reply.A.HasStddev ? reply.A.Stddev : null), Figures.Of(reply.B.HasStddev ? reply.B.Stddev : null), "", "", "");
        Row(table, "skewness", Figures.Of(reply.A.HasSkewness ? reply.A.Skewness : null), Figures.Of(reply.B.HasSkewness ? reply.B.Skewness : null), "", "", "");
        foreach (QuantileShift shift in reply.Shifts)
        {
            // Both wordings in plain or bold ink: an inconclusive comparison is not a calm one, and
            // its ratio beside it may be large.
            string verdict = !shift.Significant ? Inconclusive : shift.Delta > 0 ? "moved up" : "moved down";
            Row(
                table,
                Figures.QuantileName(shift.Q),
                $"{Figures.Of(shift.A)} {Figures.Interval(shift.ALow, shift.AHigh)}",
                $"{Figures.Of(shift.B)} {Figures.Interval(shift.BLow, shift.BHigh)}",
                $"{Figures.Of(shift.Delta)} {Figures.Interval(shift.Low, shift.High)}",
                Figures.Ratio(shift.A, shift.B),
                verdict,
                shift.Significant ? new Style(Color.Yellow, decoration: Decoration.Bold) : Style.Plain);
        }

        console.Write(table);
        console.WriteLine(BoundText.Shifts(reply.Shifts));
        console.WriteLine($"Kolmogorov–Smirnov distance {Figures.Of(reply.KsDistance)} [{Figures.Of(reply.KsLow)}, {Figures.Of(reply.KsHigh)}] at {Figures.Percent(request.Confidence)} confidence");
        console.WriteLine("\"moved\" means the quantile's two intervals (rank error plus sampling error) do not overlap; \"inconclusive\" means they do, so the move may be real or noise and the data cannot tell yet. b / a is the ratio of the two point estimates either way.");
    }

    private static double? Mean(Summary s) => s.HasMean ? s.Mean : null;

    private static void Row(Table table, string name, string a, string b, string delta, string ratio, string verdict, Style? style = null) =>
        table.AddRow(new Text(name), new Text(a), new Text(b), new Text(delta), new Text(ratio), new Text(verdict, style ?? Style.Plain));
}
