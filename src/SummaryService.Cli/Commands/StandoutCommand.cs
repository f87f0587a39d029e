using System.CommandLine;
using SummaryService.Cli.Connection;
using SummaryService.Cli.Parsing;
using SummaryService.Cli.Rendering;
using SummaryService.Contract.V1;

namespace SummaryService.Cli.Commands;

/// <summary>
/// <c>standout</c>: which value of one label carries the skew. Every group (one value of --by) is
/// compared with the merge of all the others, and the groups are listed strongest first. A group
/// is said to stand out only where the server's verdict holds at the confidence; the rest of the
/// ranking is an ordering, not a finding. Groups too small to judge are listed apart, never ranked.
/// </summary>
public static class StandoutCommand
{
    /// <summary>The window when --window is left out: the last hour.</summary>
    public const string DefaultWindow = "1h";

    /// <summary>Ranked groups shown when --top is left out.</summary>
    public const int DefaultTop = 15;

    /// <summary>The server's fields as this command's options.</summary>
    public static FieldNames Fields { get; } = new(
        ("selector.metric", "the metric"),
        ("selector", "the selection (metric, --label)"),
        ("split_by", "--by"),
        ("window", "--window"),
        ("window.range", "--window"),
        ("window.last", "--window"),
        ("before", "--before"),
        ("before.range", "--before"),
        ("before.last", "--before"),
        ("quantiles", "--quantile #{n}"),
        ("confidence", "--confidence"),
        ("measure", "--rank-by"),
        ("measure_quantile", "--at"));

    /// <summary>Builds the command.</summary>
    public static Command Create(CommandRunner runner)
    {
        ArgumentNullException.ThrowIfNull(runner);
        var command = new Command("standout", "Rank the values of one label by how far each group's distribution departs from all the others (or, with --before, by how much more it moved).");
        var metric = CommonOptions.Metric();
        var by = new Option<string>("--by", "-b") { Description = "The label whose values are compared, each against all the others (host, region, version).", HelpName = "label", Required = true };
        var labels = CommonOptions.Labels();
        var window = new Option<string>("--window", "-w") { Description = "The window compared: a length (1h: the last hour) or FROM..TO (now-3h..now-1h, ISO 8601 ends).", HelpName = "window", DefaultValueFactory = _ => DefaultWindow };
        var before = new Option<string?>("--before") { Description = "An earlier window (e.g. before a deploy), same forms: rank by how much each group moved from it against how much the rest moved.", HelpName = "window" };
        var rankBy = new Option<string>("--rank-by") { Description = "What ranks the groups: distance (Kolmogorov–Smirnov, any difference), ratio (of the --at quantile) or shift (of it, in the metric's unit).", HelpName = "measure", DefaultValueFactory = _ => "distance" };
        rankBy.AcceptOnlyFromAmong("distance", "ratio", "shift");
        var at = new Option<double?>("--at") { Description = "The quantile a ratio or shift ranks by; one of the compared quantiles (default: the highest).", HelpName = "q" };
        var quantiles = CommonOptions.Quantiles("Quantile compared with the rest, strictly between 0 and 1; repeat (default .5, .9, .99).");
        var confidence = CommonOptions.Confidence();
        var top = new Option<int>("--top") { Description = "Ranked groups shown (the reply holds them all; --json prints every one).", HelpName = "n", DefaultValueFactory = _ => DefaultTop };
        var json = CommonOptions.Json();
        foreach (Option option in new Option[] { by, labels, window, before, rankBy, at, quantiles, confidence, top, json })
        {
            command.Add(option);
        }

        command.Add(metric);
        runner.Bind(command, async run =>
        {
            var p = run.Parse;
            long now = run.NowMs;
            var request = new StandoutRequest
            {
                Selector = Selection.Of(p.GetValue(metric)!, p.GetValue(labels)),
                SplitBy = p.GetValue(by)!,
                Window = Read(p.GetValue(window)!, "--window", now),
                Before = p.GetValue(before) is { } earlier ? Read(earlier, "--before", now) : null,
                Confidence = Selection.Confidence(p.GetValue(confidence)),
                Measure = p.GetValue(rankBy) switch { "ratio" => StandoutMeasure.QuantileRatio, "shift" => StandoutMeasure.QuantileShift, _ => StandoutMeasure.Distance },
                MeasureQuantile = p.GetValue(at) ?? 0,
            };
            request.Quantiles.Add(Selection.Quantiles(p.GetValue(quantiles)));
            int shown = p.GetValue(top);
            if (shown < 1)
            {
                throw new UsageException($"--top {shown} must be at least 1.");
            }

            StandoutReply reply = await run.Server.Query.StandoutAsync(request, ServerConnection.Unary(run.Cancellation));
            if (p.GetValue(json))
            {
                JsonOutput.Write(run.Console, reply);
            }
            else
            {
                StandoutTable.Render(run.Console.Out, request, reply, shown);
            }

            return ExitCodes.Ok;
        }, Fields);
        return command;
    }

    private static Window Read(string text, string option, long nowMs) =>
        WindowText.TryParse(text, nowMs, out Window parsed, out string error) ? parsed : throw new UsageException($"{option}: {error}");
}
