using MathNet.Numerics.Distributions;
using SummaryService.Sketches.Buckets;
using SummaryService.Sketches.Quantiles;

namespace SummaryService.Sketches.Summaries;

/// <summary>
/// One side of a comparison with what every reader of it needs prepared once: the parts, the
/// summary's intersected bounds (the KLL part's sorted view and the log buckets read out in value
/// order) and the sampling z. A ranking compares each sketch several times — a group against its
/// rest, and with an earlier window against itself before — and the sorted views are most of the
/// cost, so each sketch is prepared once and its side handed to every comparison it takes part in.
/// </summary>
/// <remarks>Nothing is read until a figure is asked for, so a side of an empty group costs nothing.</remarks>
internal sealed class ComparisonSide
{
    private readonly double _z;
    private Prepared? _prepared;

    public ComparisonSide(SeriesSketch sketch, double confidence)
    {
        ArgumentNullException.ThrowIfNull(sketch);
        Confidence.Require(confidence);
        Sketch = sketch;
        ConfidenceLevel = confidence;
        _z = SamplingZ(confidence);
    }

    public SeriesSketch Sketch { get; }

    public long Count => Sketch.Count;

    /// <summary>The confidence the bounds are prepared at.</summary>
    public double ConfidenceLevel { get; }

    /// <summary>The KLL part as the full form holds it, or null.</summary>
    public KllSketch? Quantiles => Prepare().Quantiles;

    /// <summary>The log-bucket part, or null.</summary>
    public LogBucketSketch? Buckets => Prepare().Buckets;

    public SummaryBounds Bounds => Prepare().Bounds;

    /// <summary>z at 1 − δ/4: each end of the sampling interval fails with probability δ/4.</summary>
    public static double SamplingZ(double confidence) => Normal.InvCDF(0, 1, 1 - ((1 - confidence) / 4));

    /// <summary>The interval holding the population quantile q (<see cref="SketchComparison.PopulationQuantile"/>).</summary>
    public QuantileEstimate PopulationQuantile(double q)
    {
        double sampling = _z * Math.Sqrt(q * (1 - q) * Count);
        QuantileEstimate estimate = Bounds.Quantile(q);
        QuantileEstimate interval = Bounds.Quantile(q, sampling);
        return estimate with { Low = interval.Low, High = interval.High, LowSource = interval.LowSource, HighSource = interval.HighSource };
    }

    /// <summary>The log buckets read out at <paramref name="scale"/> (at most this side's own), for a bucket-by-bucket comparison.</summary>
    public OccupiedLogBuckets OccupiedAt(int scale)
    {
        LogBucketSketch buckets = Buckets!;
        if (buckets.Scale == scale && Bounds.Occupied is { } occupied)
        {
            return occupied;
        }

        LogBucketSketch copy = buckets.Clone();
        copy.DownscaleTo(scale);
        return OccupiedLogBuckets.Of(copy);
    }

    private Prepared Prepare()
    {
        if (_prepared is null)
        {
            var (quantiles, buckets, _) = Sketch.FullParts();
            _prepared = new Prepared(quantiles, buckets, new SummaryBounds(Sketch.Moments, quantiles, buckets, ConfidenceLevel, Sketch.EdgeBuckets));
        }

        return _prepared;
    }

    private sealed record Prepared(KllSketch? Quantiles, LogBucketSketch? Buckets, SummaryBounds Bounds);
}
