namespace SummaryService.Sketches.Summaries;

/// <summary>
/// Which histogram to build: explicit ascending edges, a number of equal-width bins over [min, max],
/// or bins that follow the log buckets (exact counts).
/// </summary>
public sealed record HistogramSpec
{
    /// <summary>Bins used when neither edges nor a count are given.</summary>
    public const int DefaultBinCount = 20;

    /// <summary>Ascending, finite, distinct bin edges; empty for automatic edges.</summary>
    public IReadOnlyList<double> Edges { get; init; } = [];

    /// <summary>Equal-width bins over [min, max] when <see cref="Edges"/> is empty.</summary>
    public int BinCount { get; init; } = DefaultBinCount;

    /// <summary>
    /// Bins that follow the log buckets, neighbours combined (the scale lowered) until at most
    /// <see cref="BinCount"/> bins span the data: log-scaled edges, exact counts. Without log buckets
    /// equal-width bins are built instead.
    /// </summary>
    public bool LogBuckets { get; init; }

    /// <summary>Bins that follow the log buckets, at most <paramref name="maxBins"/> of them.</summary>
    public static HistogramSpec LogScaled(int maxBins = DefaultBinCount) => new() { BinCount = maxBins, LogBuckets = true };

    /// <summary>Equal-width bins over the data's range.</summary>
    public static HistogramSpec Automatic(int binCount = DefaultBinCount) => new() { BinCount = binCount };

    /// <summary>Bins between the given edges.</summary>
    public static HistogramSpec WithEdges(params double[] edges) => new() { Edges = edges };
}
