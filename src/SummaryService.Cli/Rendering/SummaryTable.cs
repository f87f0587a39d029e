using Spectre.Console;
using Spectre.Console.Rendering;
using SummaryService.Contract.V1;

namespace SummaryService.Cli.Rendering;

/// <summary>
/// Every statistic of a summary in one table, each with its interval and what the interval means, so
/// an estimate is never shown without its uncertainty.
/// </summary>
public static class SummaryTable
{
    /// <summary>The table of <paramref name="summary"/>.</summary>
    public static Table Of(Summary summary)
    {
        ArgumentNullException.ThrowIfNull(summary);
        var table = new Table().Border(TableBorder.Rounded);
        table.AddColumn(new TableColumn(new Text("statistic")));
        table.AddColumn(new TableColumn(new Text("estimate")).RightAligned());
        table.AddColumn(new TableColumn(new Text("interval")).RightAligned());
        table.AddColumn(new TableColumn(new Text("note")));
        string level = Figures.Percent(summary.Confidence);
        Row(table, "count", summary.Count.ToString(System.Globalization.CultureInfo.InvariantCulture), "", "exact");
        Row(table, "mean", Figures.Of(summary.HasMean ? summary.Mean : null), Figures.Interval(summary.HasMeanLow ? summary.MeanLow : null, summary.HasMeanHigh ? summary.MeanHigh : null), $"Student-t, {level}");
        QuantileEstimate? median = summary.FiveNumber?.Median;
        if (median is not null)
        {
            Row(table, "median (p50)", Figures.Of(median.Value), Figures.Interval(median.Low, median.High), BoundText.Quantile(median, level));
            if (summary.HasMean)
            {
                double gap = summary.Mean - median.Value;
                Row(table, "mean − median", Figures.Of(gap), "", gap > 0 ? "mean above median: a right tail pulls it" : gap < 0 ? "mean below median: a left tail pulls it" : "");
            }
        }

        Row(table, "standard deviation", Figures.Of(summary.HasStddev ? summary.Stddev : null), "", "sample (n − 1)");
        Row(table, "variance", Figures.Of(summary.HasVariance ? summary.Variance : null), "", "sample (n − 1)");
        Row(table, "population variance", Figures.Of(summary.HasPopulationVariance ? summary.PopulationVariance : null), "", "n");
        Row(table, "standard error", Figures.Of(summary.HasStandardError ? summary.StandardError : null), "", "s / √n");
        Row(table, "skewness", Figures.Of(summary.HasSkewness ? summary.Skewness : null), "", "adjusted Fisher–Pearson G1");
        Row(table, "excess kurtosis", Figures.Of(summary.HasKurtosis ? summary.Kurtosis : null), "", "bias-corrected G2");
        // Differences of cumulative histograms may know their extremes only as bounds; the reply says so.
        bool bounded = summary.ExtremesBounded;
        Row(table, "min", Figures.Of(summary.HasMin ? summary.Min : null), "", bounded ? "bound: at or below the smallest value" : "exact");
        Row(table, "max", Figures.Of(summary.HasMax ? summary.Max : null), "", bounded ? "bound: at or above the largest value" : "exact");
        Row(table, "range", Figures.Of(summary.HasRange ? summary.Range : null), "", bounded ? "bound: at or above the true range" : "exact");
        Row(table, "IQR", Figures.Of(summary.HasIqr ? summary.Iqr : null), Figures.Interval(summary.HasIqrLow ? summary.IqrLow : null, summary.HasIqrHigh ? summary.IqrHigh : null), "Q3 − Q1");
        Row(table, "MAD", Figures.Of(summary.HasMad ? summary.Mad : null), Figures.Interval(summary.HasMadLow ? summary.MadLow : null, summary.HasMadHigh ? summary.MadHigh : null), "median |x − median|, unscaled");
        Row(table, "quartile skewness", Figures.Of(summary.HasQuartileSkewness ? summary.QuartileSkewness : null), "", "Bowley");
        // Min, median and max have rows of their own above; a quantile at 0, 0.5 or 1 would repeat them.
        foreach (QuantileEstimate q in summary.Quantiles.Where(q => q.Q is not 0 and not 1 && !(q.Q == 0.5 && median is not null)))
        {
            Row(table, Figures.QuantileName(q.Q), Figures.Of(q.Value), Figures.Interval(q.Low, q.High), BoundText.Quantile(q, level));
        }

        foreach (RankEstimate r in summary.Ranks)
        {
            Row(table, $"share ≤ {Figures.Of(r.Value)}", Figures.Percent(r.Fraction), $"[{Figures.Percent(r.Low)}, {Figures.Percent(r.High)}]", $"{BoundText.Of(r.LowSource, r.HighSource)}, {level}");
        }

        foreach (ModeEstimate m in summary.Modes)
        {
            if (m.Kind == ModeKind.Region)
            {
                // A density peak of continuous data: where it lies, and the share of values in its hump.
                Row(table, $"mode ~{Figures.Of(m.Value)}", $"{Figures.Percent(m.Share)} of values", Figures.Interval(m.Low, m.High), "density peak: where it lies");
            }
            else
            {
                Row(table, $"mode {Figures.Of(m.Value)}", $"{m.Count}×", $"[{m.CountLow}, {m.CountHigh}]", "occurrences");
            }
        }

        if (summary.ModesOmitted > 0)
        {
            Row(table, "modes left out", summary.ModesOmitted.ToString(System.Globalization.CultureInfo.InvariantCulture), "", "raise --modes to list them");
        }

        table.Caption(Markup.Escape(summary.Exact
            ? "exact: nothing was approximated"
            : $"{BoundText.Form(summary)}; rank error ε = {Figures.Percent(summary.RankError)} at {level} confidence"));
        return table;
    }

    /// <summary>The histogram as text bars with each bin's count interval, or null when there is none.</summary>
    public static IRenderable? Histogram(Summary summary, int width = 30)
    {
        ArgumentNullException.ThrowIfNull(summary);
        if (summary.Histogram is null || summary.Histogram.Bins.Count == 0)
        {
            return null;
        }

        double max = summary.Histogram.Bins.Max(b => b.Count);
        var grid = new Grid();
        grid.AddColumn(new GridColumn().RightAligned());
        grid.AddColumn();
        grid.AddColumn(new GridColumn().RightAligned());
        grid.AddColumn();
        foreach (HistogramBin bin in summary.Histogram.Bins)
        {
            grid.AddRow(
                new Text($"[{Figures.Of(bin.Lower)}, {Figures.Of(bin.Upper)})"),
                new Text(Bars.Bar(bin.Count, max, width), new Style(Color.Teal)),
                new Text(Figures.Of(bin.Count)),
                new Text(bin.CountLow == bin.CountHigh ? "" : $"[{Figures.Of(bin.CountLow)}, {Figures.Of(bin.CountHigh)}]", new Style(Color.Grey)));
        }

        return grid;
    }

    private static void Row(Table table, string name, string estimate, string interval, string note) =>
        table.AddRow(new Text(name), new Text(estimate), new Text(interval), new Text(note, new Style(Color.Grey)));
}
