namespace SummaryService.Sketches.Summaries;

/// <summary>
/// A quantile with its value interval: the true sample quantile (Hyndman &amp; Fan definition 7)
/// lies in [<see cref="Low"/>, <see cref="High"/>] with at least the summary's confidence.
/// </summary>
/// <param name="Q">Requested probability in [0, 1].</param>
/// <param name="Value">Estimate; exact when the sketch is exact.</param>
/// <param name="Low">Lower end of the value interval.</param>
/// <param name="High">Upper end of the value interval.</param>
/// <param name="RankError">Normalized rank error ε of the KLL part at the summary's confidence (0 without one).</param>
public readonly record struct QuantileEstimate(double Q, double Value, double Low, double High, double RankError)
{
    /// <summary>Which bound gave <see cref="Low"/>.</summary>
    public BoundSource LowSource { get; init; }

    /// <summary>Which bound gave <see cref="High"/>.</summary>
    public BoundSource HighSource { get; init; }
}

/// <summary>Share of values at or below <see cref="Value"/>, with its interval at the summary's confidence.</summary>
/// <param name="Value">Threshold asked about.</param>
/// <param name="Fraction">Estimated share of values ≤ <see cref="Value"/>.</param>
/// <param name="Low">Lower end of the interval.</param>
/// <param name="High">Upper end of the interval.</param>
public readonly record struct RankEstimate(double Value, double Fraction, double Low, double High)
{
    /// <summary>Which bound gave <see cref="Low"/>.</summary>
    public BoundSource LowSource { get; init; }

    /// <summary>Which bound gave <see cref="High"/>.</summary>
    public BoundSource HighSource { get; init; }
}

/// <summary>
/// One histogram bin [<see cref="Lower"/>, <see cref="Upper"/>) — the last bin also holds its upper
/// edge — with its estimated count and the interval the bounds at its two edges give.
/// </summary>
public readonly record struct HistogramBin(double Lower, double Upper, double Count, double CountLow, double CountHigh)
{
    /// <summary>Which bound gave <see cref="CountLow"/> (the weaker of the two edges').</summary>
    public BoundSource LowSource { get; init; }

    /// <summary>Which bound gave <see cref="CountHigh"/>.</summary>
    public BoundSource HighSource { get; init; }
}

/// <summary>Minimum, quartiles and maximum; the extremes are always exact.</summary>
public readonly record struct FiveNumberSummary(double Min, QuantileEstimate LowerQuartile, QuantileEstimate Median, QuantileEstimate UpperQuartile, double Max);

/// <summary>
/// Which of the honest intervals an answer has gave one end of its interval. Every approximate
/// answer is the intersection of all of them: the KLL rank bound at the confidence, the log
/// buckets' deterministic bound, and the exact [min, max] (or the exact count outside it).
/// </summary>
public enum BoundSource
{
    /// <summary>Nothing to bound (no values).</summary>
    None = 0,

    /// <summary>The sketch holds every value: the figure is exact.</summary>
    Exact = 1,

    /// <summary>The exact minimum or maximum (or the exact count beyond them).</summary>
    Range = 2,

    /// <summary>The log buckets: certain, since their counts are exact.</summary>
    LogBuckets = 3,

    /// <summary>The KLL rank bound: holds with the summary's confidence.</summary>
    RankError = 4,

    /// <summary>The edges of explicit-bounds histogram buckets: certain, since their counts are exact.</summary>
    Edges = 5,
}

/// <summary>Which parts a summary was read from; its bounds describe exactly those.</summary>
public enum SketchForm
{
    /// <summary>KLL and log buckets (and, while few, the values themselves).</summary>
    Full = 0,

    /// <summary>Log buckets without KLL: the compact form of aged buckets.</summary>
    LogBuckets = 1,

    /// <summary>KLL without log buckets: buckets written before log buckets existed.</summary>
    RankOnly = 2,

    /// <summary>Neither: a merge of the two forms above; quantiles are bounded by [min, max] only.</summary>
    MomentsOnly = 3,

    /// <summary>Edge buckets: explicit-bounds histograms (and whatever was merged with them), bounded by their edges.</summary>
    EdgeBuckets = 4,
}
