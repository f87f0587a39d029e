using System.Globalization;
using Spectre.Console;
using SummaryService.Cli.Commands;
using SummaryService.Contract.V1;

namespace SummaryService.Cli.Rendering;

/// <summary>
/// The ranking as a table: one row per ranked group, strongest first, with the quantile ranked by
/// (or the highest compared) on both sides and the distance; groups that could not be judged are
/// named below it. "stands out" appears only where the server's verdict holds; everywhere else the
/// row says "inconclusive", which is not "calm": the figures beside it stay in full ink.
/// </summary>
public static class StandoutTable
{
    /// <summary>The wording of a group whose verdict does not hold.</summary>
    public const string Inconclusive = "inconclusive";

    /// <summary>Writes the ranking; at most <paramref name="top"/> ranked rows.</summary>
    public static void Render(IAnsiConsole console, StandoutRequest request, StandoutReply reply, int top)
    {
        ArgumentNullException.ThrowIfNull(console);
        ArgumentNullException.ThrowIfNull(request);
        ArgumentNullException.ThrowIfNull(reply);
        bool moved = reply.CoveredBefore is not null;
        console.Write(new Rule(Markup.Escape($"{Figures.Series(request.Selector.Metric, request.Selector.LabelEquals)} · by {request.SplitBy}")).LeftJustified());
        console.WriteLine(moved ? $"window: {WindowCommand.Span(reply.Covered)}; before: {WindowCommand.Span(reply.CoveredBefore)}" : $"window: {WindowCommand.Span(reply.Covered)}");
        console.WriteLine($"ranked by {MeasureName(reply, moved)}, each group against all the others, at {Figures.Percent(reply.Confidence)} confidence");
        if (reply.UnsplitSeries > 0)
        {
            console.WriteLine($"{reply.UnsplitSeries} series without {request.SplitBy} join every group's rest.");
        }

        if (reply.Ranked.Count > 0)
        {
            console.Write(moved ? MoveTable(request, reply, top) : WindowTable(request, reply, top));
        }

        if (reply.Ranked.Count > top)
        {
            console.WriteLine($"… {reply.Ranked.Count - top} more ranked groups (--top {reply.Ranked.Count} shows them all).");
        }

        foreach (var reason in reply.Unranked.GroupBy(g => g.Standing))
        {
            string why = reason.Key == StandoutStanding.NoRatio ? "no ratio (the quantile is not positive on both sides)" : "too few values to judge";
            console.WriteLine($"not ranked, {why}: {string.Join(", ", reason.Select(g => $"{g.Value} ({Count(g.Count)} values)"))}");
        }

        console.WriteLine(moved
            ? "\"moved more\" / \"moved less\": even the smallest difference between the group's move and its rest's that the intervals allow is not zero."
            : "\"stands out\": the group's interval and its rest's do not overlap (for the distance: its lower bound exceeds what two samples of one distribution show).");
    }

    private static Table WindowTable(StandoutRequest request, StandoutReply reply, int top)
    {
        var table = NewTable(request.SplitBy, "count (series)", "rest (series)");
        string q = Figures.QuantileName(ShownQuantile(reply));
        table.AddColumn(new TableColumn(new Text($"{q} group [interval]")).RightAligned());
        table.AddColumn(new TableColumn(new Text($"{q} rest [interval]")).RightAligned());
        table.AddColumn(new TableColumn(new Text("group / rest")).RightAligned().NoWrap());
        table.AddColumn(new TableColumn(new Text("distance [bounds]")).RightAligned());
        table.AddColumn(new TableColumn(new Text("verdict")).NoWrap());
        int rank = 0;
        foreach (StandoutGroup g in reply.Ranked.Take(top))
        {
            StandoutQuantile? shown = g.Quantiles.FirstOrDefault(x => x.Shift.Q == ShownQuantile(reply));
            QuantileShift? s = shown?.Shift;
            string verdict = !g.Significant ? Inconclusive : s is null || s.Delta >= 0 ? "stands out: higher" : "stands out: lower";
            Row(
                table,
                g.Significant,
                (++rank).ToString(CultureInfo.InvariantCulture),
                g.Value,
                $"{Count(g.Count)} ({g.SeriesMerged})",
                $"{Count(g.RestCount)} ({g.RestSeriesMerged})",
                s is null ? "—" : $"{Figures.Of(s.B)} {Figures.Interval(s.BLow, s.BHigh)}",
                s is null ? "—" : $"{Figures.Of(s.A)} {Figures.Interval(s.ALow, s.AHigh)}",
                s is null ? "—" : Figures.Ratio(s.A, s.B),
                g.Distance is { } d ? $"{Figures.Of(d.Distance)} [{Figures.Of(d.Low)}, {Figures.Of(d.High)}]" : "—",
                verdict);
        }

        return table;
    }

    private static Table MoveTable(StandoutRequest request, StandoutReply reply, int top)
    {
        var table = NewTable(request.SplitBy, "count before → now", "rest before → now");
        string q = Figures.QuantileName(ShownQuantile(reply));
        table.AddColumn(new TableColumn(new Text($"{q} group before → now")).RightAligned());
        table.AddColumn(new TableColumn(new Text($"{q} rest before → now")).RightAligned());
        table.AddColumn(new TableColumn(new Text(ExcessName(reply.Measure))).RightAligned());
        table.AddColumn(new TableColumn(new Text("verdict")).NoWrap());
        int rank = 0;
        foreach (StandoutGroup g in reply.Ranked.Take(top))
        {
            StandoutMove m = g.Move;
            QuantileMove? shown = m.Quantiles.FirstOrDefault(x => x.Q == ShownQuantile(reply));
            double excess = reply.Measure == StandoutMeasure.QuantileRatio ? shown?.LogRatioExcess ?? 0 : reply.Measure == StandoutMeasure.QuantileShift ? shown?.Excess ?? 0 : m.DistanceExcess;
            string verdict = !g.Significant ? Inconclusive : excess > 0 ? "moved more" : "moved less";
            Row(
                table,
                g.Significant,
                (++rank).ToString(CultureInfo.InvariantCulture),
                g.Value,
                $"{Count(m.CountBefore)} → {Count(g.Count)}",
                $"{Count(m.RestCountBefore)} → {Count(g.RestCount)}",
                shown is null ? "—" : $"{Figures.Of(shown.Group.A)} → {Figures.Of(shown.Group.B)} {Figures.Ratio(shown.Group.A, shown.Group.B)}",
                shown is null ? "—" : $"{Figures.Of(shown.Rest.A)} → {Figures.Of(shown.Rest.B)} {Figures.Ratio(shown.Rest.A, shown.Rest.B)}",
                Excess(reply.Measure, shown, m),
                verdict);
        }

        return table;
    }

    private static string Excess(StandoutMeasure measure, QuantileMove? q, StandoutMove m) => measure switch
    {
        StandoutMeasure.QuantileRatio when q is { HasLogRatioExcess: true } =>
            $"×{Math.Exp(q.LogRatioExcess).ToString("0.###", CultureInfo.InvariantCulture)} [×{Math.Exp(q.LogRatioExcessLow).ToString("0.###", CultureInfo.InvariantCulture)}, ×{Math.Exp(q.LogRatioExcessHigh).ToString("0.###", CultureInfo.InvariantCulture)}]",
        StandoutMeasure.QuantileShift when q is not null => $"{Figures.Of(q.Excess)} {Figures.Interval(q.ExcessLow, q.ExcessHigh)}",
        StandoutMeasure.QuantileRatio or StandoutMeasure.QuantileShift => "—",
        _ => $"{Figures.Of(m.GroupDistance?.Distance)} vs {Figures.Of(m.RestDistance?.Distance)}",
    };

    private static string ExcessName(StandoutMeasure measure) => measure switch
    {
        StandoutMeasure.QuantileRatio => "group move ÷ rest move",
        StandoutMeasure.QuantileShift => "group move − rest move",
        _ => "distance moved: group vs rest",
    };

    private static string MeasureName(StandoutReply reply, bool moved)
    {
        string what = reply.Measure switch
        {
            StandoutMeasure.QuantileRatio => $"the {Figures.QuantileName(reply.MeasureQuantile)} ratio",
            StandoutMeasure.QuantileShift => $"the {Figures.QuantileName(reply.MeasureQuantile)} shift",
            _ => "Kolmogorov–Smirnov distance",
        };
        return moved ? $"how much more or less than its rest each group moved ({what})" : what;
    }

    // The quantile ranked by, or for the distance the highest compared.
    private static double ShownQuantile(StandoutReply reply) =>
        reply.MeasureQuantile > 0 ? reply.MeasureQuantile
        : reply.Ranked.Concat(reply.Unranked).SelectMany(g => g.Quantiles.Select(q => q.Shift.Q).Concat(g.Move?.Quantiles.Select(q => q.Q) ?? [])).DefaultIfEmpty(0).Max();

    private static Table NewTable(string label, string count, string restCount)
    {
        var table = new Table().Border(TableBorder.Rounded);
        table.AddColumn(new TableColumn(new Text("#")).RightAligned());
        table.AddColumn(new TableColumn(new Text(label)));
        table.AddColumn(new TableColumn(new Text(count)).RightAligned());
        table.AddColumn(new TableColumn(new Text(restCount)).RightAligned());
        return table;
    }

    private static void Row(Table table, bool significant, params string[] cells)
    {
        var style = significant ? new Style(Color.Yellow, decoration: Decoration.Bold) : Style.Plain;
        table.AddRow([.. cells.Select((c, i) => new Text(c, i == cells.Length - 1 ? style : Style.Plain))]);
    }

    private static string Count(ulong count) => count.ToString("N0", CultureInfo.InvariantCulture);
}
