using System.Globalization;
using SummaryService.Contract.V1;

namespace SummaryService.Cli.Rendering;

/// <summary>
/// Says which bound held an interval: the log buckets (certain), the KLL rank bound (at the stated
/// confidence), the exact min or max, or nothing approximated. Every interval the server sends is
/// the intersection of the bounds it has, so each end may come from a different one.
/// </summary>
public static class BoundText
{
    /// <summary>One word or two for the ends of an interval: "log buckets", "rank bound", "log buckets / rank bound".</summary>
    public static string Of(BoundSource low, BoundSource high) =>
        low == high || high == BoundSource.Unspecified ? Name(low) : low == BoundSource.Unspecified ? Name(high) : $"{Name(low)} / {Name(high)}";

    /// <summary>The note beside a quantile: which bound held it, and the rank error where the rank bound did.</summary>
    public static string Quantile(QuantileEstimate q, string level)
    {
        ArgumentNullException.ThrowIfNull(q);
        string bound = Of(q.LowSource, q.HighSource);
        bool ranked = q.LowSource == BoundSource.RankError || q.HighSource == BoundSource.RankError;
        return ranked ? $"{bound}: ε = {Figures.Percent(q.RankError)} at {level}" : bound;
    }

    /// <summary>What the summary was read from and the relative bound of its log buckets.</summary>
    public static string Form(Summary summary)
    {
        ArgumentNullException.ThrowIfNull(summary);
        string buckets = summary.HasRelativeError
            ? $"log buckets at scale {summary.BucketScale.ToString(CultureInfo.InvariantCulture)}: quantiles within ±{Figures.Percent(summary.RelativeError)} of their interval's middle"
            : "no log buckets";
        return summary.Form switch
        {
            SketchForm.LogBuckets => $"aged buckets (no rank part); {buckets}",
            SketchForm.RankOnly => "buckets written before log buckets: rank bound only",
            SketchForm.MomentsOnly => "old and aged buckets merged: quantiles bounded by min and max only",
            SketchForm.EdgeBuckets => "explicit-bounds histograms: quantiles bounded by the edges of the buckets that hold them",
            _ => buckets,
        };
    }

    /// <summary>One line naming, for each compared quantile, which bounds held side a's and side b's interval.</summary>
    public static string Shifts(IEnumerable<QuantileShift> shifts) =>
        "interval bounds: " + string.Join("; ", shifts.Select(s => $"{Figures.QuantileName(s.Q)} a {Of(s.ALowSource, s.AHighSource)}, b {Of(s.BLowSource, s.BHighSource)}"));

    private static string Name(BoundSource source) => source switch
    {
        BoundSource.Exact => "exact",
        BoundSource.Range => "min/max",
        BoundSource.LogBuckets => "log buckets",
        BoundSource.RankError => "rank bound",
        BoundSource.Edges => "histogram edges",
        _ => "—",
    };
}
