using SummaryService.Sketches.Modes;

namespace SummaryService.Sketches.Summaries;

/// <summary>
/// The descriptive summary of a stream, each approximate figure with its interval. A statistic
/// that is undefined for the data (variance of one value, skewness of fewer than three, anything
/// of nothing) is null, never 0.
/// </summary>
public sealed record Summary
{
    /// <summary>Number of values.</summary>
    public long Count { get; init; }

    /// <summary>Compensated sum.</summary>
    public double? Sum { get; init; }

    /// <summary>Arithmetic mean.</summary>
    public double? Mean { get; init; }

    /// <summary>Student-t interval for the population mean at the summary's confidence (n ≥ 2).</summary>
    public double? MeanLow { get; init; }

    /// <inheritdoc cref="MeanLow"/>
    public double? MeanHigh { get; init; }

    /// <summary>Standard error of the mean, s/√n (n ≥ 2).</summary>
    public double? StandardError { get; init; }

    /// <summary>Sample variance M2/(n − 1) (n ≥ 2).</summary>
    public double? Variance { get; init; }

    /// <summary>Population variance M2/n (n ≥ 1).</summary>
    public double? PopulationVariance { get; init; }

    /// <summary>Sample standard deviation (n ≥ 2).</summary>
    public double? StandardDeviation { get; init; }

    /// <summary>Adjusted Fisher–Pearson skewness G1 (n ≥ 3, values not all equal).</summary>
    public double? Skewness { get; init; }

    /// <summary>Bias-corrected excess kurtosis G2 (n ≥ 4, values not all equal).</summary>
    public double? Kurtosis { get; init; }

    /// <summary>Smallest value (exact, unless <see cref="ExtremesBounded"/>: then at or below it).</summary>
    public double? Min { get; init; }

    /// <summary>Largest value (exact, unless <see cref="ExtremesBounded"/>: then at or above it).</summary>
    public double? Max { get; init; }

    /// <summary>Max − min (exact, unless <see cref="ExtremesBounded"/>: then at or above the true range).</summary>
    public double? Range { get; init; }

    /// <summary>
    /// True when some values arrived with only bounds on their extremes (the difference of two
    /// cumulative histogram points): <see cref="Min"/>, <see cref="Max"/>, <see cref="Range"/> and
    /// the five-number extremes are then outer bounds, not values seen.
    /// </summary>
    public bool ExtremesBounded { get; init; }

    /// <summary>Requested quantiles, in the order asked.</summary>
    public IReadOnlyList<QuantileEstimate> Quantiles { get; init; } = [];

    /// <summary>Minimum, quartiles, maximum.</summary>
    public FiveNumberSummary? FiveNumber { get; init; }

    /// <summary>Interquartile range Q3 − Q1.</summary>
    public double? Iqr { get; init; }

    /// <summary>Interval for the IQR from the quartiles' intervals.</summary>
    public double? IqrLow { get; init; }

    /// <inheritdoc cref="IqrLow"/>
    public double? IqrHigh { get; init; }

    /// <summary>Median absolute deviation from the median (unscaled).</summary>
    public double? Mad { get; init; }

    /// <summary>Interval for the MAD, derived from the median's interval and the count bounds.</summary>
    public double? MadLow { get; init; }

    /// <inheritdoc cref="MadLow"/>
    public double? MadHigh { get; init; }

    /// <summary>Which bound gave <see cref="MadLow"/>.</summary>
    public BoundSource MadLowSource { get; init; }

    /// <summary>Which bound gave <see cref="MadHigh"/>.</summary>
    public BoundSource MadHighSource { get; init; }

    /// <summary>Which bound gave <see cref="IqrLow"/> (the weaker of the two quartiles' ends).</summary>
    public BoundSource IqrLowSource { get; init; }

    /// <summary>Which bound gave <see cref="IqrHigh"/>.</summary>
    public BoundSource IqrHighSource { get; init; }

    /// <summary>Bowley's quartile skewness (Q3 + Q1 − 2·Q2)/(Q3 − Q1); null when Q3 = Q1.</summary>
    public double? QuartileSkewness { get; init; }

    /// <summary>Shares of values at or below the requested thresholds.</summary>
    public IReadOnlyList<RankEstimate> Ranks { get; init; } = [];

    /// <summary>
    /// Modes, most frequent or most prominent first: on discrete data every value that could be the
    /// most frequent (ties together); on continuous data the density peaks of the log buckets.
    /// </summary>
    public IReadOnlyList<ModeEstimate> Modes { get; init; } = [];

    /// <summary>Values that could be the mode but were left out by the mode limit.</summary>
    public int ModesOmitted { get; init; }

    /// <summary>Histogram, when one was asked for.</summary>
    public IReadOnlyList<HistogramBin>? Histogram { get; init; }

    /// <summary>True when no figure is approximate: nothing was compacted and every mode count is exact.</summary>
    public bool Exact { get; init; }

    /// <summary>Normalized rank error ε of the quantile sketch at <see cref="Confidence"/>.</summary>
    public double RankError { get; init; }

    /// <summary>Confidence of every interval in this summary.</summary>
    public double Confidence { get; init; }

    /// <summary>Which parts the figures were read from.</summary>
    public SketchForm Form { get; init; }

    /// <summary>
    /// The log buckets' relative bound (base − 1)/(base + 1) at the scale in force; null without log
    /// buckets. A quantile interval read from them reaches at most this far from its midpoint,
    /// relatively, for values of one sign.
    /// </summary>
    public double? RelativeError { get; init; }

    /// <summary>Scale of the log buckets read; null without them.</summary>
    public int? BucketScale { get; init; }
}
