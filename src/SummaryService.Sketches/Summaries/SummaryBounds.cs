using SummaryService.Sketches.Buckets;
using SummaryService.Sketches.Moments;
using SummaryService.Sketches.Quantiles;

namespace SummaryService.Sketches.Summaries;

/// <summary>
/// Reads every approximate figure of a summary as the intersection of the honest intervals the
/// parts give: the KLL rank bound at the confidence (<see cref="RankBounds"/>), the log buckets'
/// deterministic bound (<see cref="LogBucketView"/>) and the exact [min, max] — whichever of them
/// the sketch has. Each answer names the source of each end. A sketch of explicit-bounds histograms
/// has edge buckets in place of log buckets; they are read through the same view and named
/// <see cref="BoundSource.Edges"/>.
/// </summary>
internal sealed class SummaryBounds
{
    private readonly RankBounds? _rank;
    private readonly double _min;
    private readonly double _max;
    private readonly bool _extremesExact;

    // Which buckets the view reads: the log buckets, or a producer's edges.
    private readonly BoundSource _bucketSource;

    public SummaryBounds(MomentSketch moments, KllSketch? quantiles, LogBucketSketch? buckets, double confidence, EdgeBucketSketch? edges = null)
    {
        Count = moments.Count;
        _min = moments.Min;
        _max = moments.Max;
        _extremesExact = moments.ExtremesExact;
        _rank = quantiles is null ? null : new RankBounds(quantiles, confidence);
        Exact = quantiles?.IsExact == true;
        Occupied = buckets is null ? null : OccupiedLogBuckets.Of(buckets);
        Buckets = edges is not null ? LogBucketView.OfEdges(edges, _min, _max, _extremesExact)
            : Occupied is null ? null : LogBucketView.Of(Occupied, _min, _max, _extremesExact);
        _bucketSource = edges is not null ? BoundSource.Edges : BoundSource.LogBuckets;
    }

    /// <summary>The log buckets as read out for this summary, shared with its other readers.</summary>
    public OccupiedLogBuckets? Occupied { get; }

    public long Count { get; }

    /// <summary>True when the KLL part holds every value: every figure is then exact.</summary>
    public bool Exact { get; }

    public RankBounds? Rank => _rank;

    public LogBucketView? Buckets { get; }

    /// <summary>ε of the KLL part at the confidence; 0 without one.</summary>
    public double Epsilon => _rank?.Epsilon ?? 0;

    /// <summary>The weighted values point estimates are read from: the KLL items, or else the bucket midpoints.</summary>
    public KllSortedView? EstimateView => _rank?.View ?? Buckets?.Midpoints();

    /// <summary>A quantile with the intersected interval; the estimate is the KLL one inside it, or without a KLL part the interval's middle.</summary>
    public QuantileEstimate Quantile(double q) => Quantile(q, 0, _rank?.ValueShift ?? 0);

    /// <summary>
    /// The quantile read at ranks shifted outward by <paramref name="samplingShift"/> values on
    /// top of each part's own error: the interval for a population quantile in a comparison.
    /// </summary>
    public QuantileEstimate Quantile(double q, double samplingShift) => Quantile(q, samplingShift, _rank?.ValueShift ?? 0);

    /// <summary>Median interval for the MAD: the KLL part at a quarter of the failure budget.</summary>
    public QuantileEstimate MedianForMad() => Quantile(0.5, 0, _rank?.MedianShiftForMad ?? 0);

    /// <summary>The share of values at or below <paramref name="x"/>, with the intersected interval.</summary>
    public RankEstimate ShareAtOrBelow(double x)
    {
        CountBound count = CountBelow(x, strict: false, _rank?.PointError ?? 0);
        double n = Count;
        return new RankEstimate(x, count.Estimate / n, count.Low / n, count.High / n) { LowSource = count.LowSource, HighSource = count.HighSource };
    }

    /// <summary>
    /// Bounds on the number of values below <paramref name="x"/> (strictly, or at or below), with
    /// the KLL part's error taken as <paramref name="rankError"/> values: exact outside [min, max].
    /// </summary>
    public CountBound CountBelow(double x, bool strict, double rankError)
    {
        long n = Count;
        bool below = strict ? x <= _min : x < _min;
        bool above = strict ? x > _max : x >= _max;
        if (below || above)
        {
            double exact = below ? 0 : n;
            return new CountBound(exact, exact, BoundSource.Range, exact, BoundSource.Range);
        }

        // The KLL part's ± t and the log buckets' certain bounds, intersected (this runs in the MAD's
        // bisection, so without the general intersection's loop): the surer source wins ties, and a
        // KLL interval that misses the certain one altogether is left out.
        double total = n;
        double low = 0;
        double high = total;
        BoundSource lowSource = BoundSource.Range;
        BoundSource highSource = BoundSource.Range;
        double estimate = double.NaN;
        bool hasBuckets = Buckets is not null && !Exact;
        double bucketLow = 0;
        double bucketHigh = total;
        if (hasBuckets)
        {
            (double bucketEstimate, long certainLow, long certainHigh) = Buckets!.CountBelow(x, strict);
            (estimate, bucketLow, bucketHigh) = (bucketEstimate, certainLow, certainHigh);
            (low, lowSource, high, highSource) = (certainLow, _bucketSource, certainHigh, _bucketSource);
        }

        if (_rank is not null)
        {
            double rank = strict ? _rank.View.CountBelow(x) : _rank.View.CountAtOrBelow(x);
            estimate = rank;
            BoundSource source = Exact ? BoundSource.Exact : BoundSource.RankError;
            double rankLow = Math.Max(0, rank - rankError);
            double rankHigh = Math.Min(total, rank + rankError);
            if (!hasBuckets || (rankLow <= bucketHigh && rankHigh >= bucketLow))
            {
                (low, lowSource) = !hasBuckets || rankLow > low ? (rankLow, source) : (low, lowSource);
                (high, highSource) = !hasBuckets || rankHigh < high ? (rankHigh, source) : (high, highSource);
            }
        }

        if (double.IsNaN(estimate))
        {
            return new CountBound(total / 2, 0, BoundSource.Range, total, BoundSource.Range);
        }

        return new CountBound(Math.Clamp(estimate, low, high), low, lowSource, high, highSource);
    }

    /// <summary>Bins between the given edges: each count's interval from the bounds at its two edges.</summary>
    public HistogramBin[] Histogram(double[] edges)
    {
        double t = _rank?.PointError ?? 0;
        var bins = new HistogramBin[edges.Length - 1];
        for (int i = 0; i < bins.Length; i++)
        {
            bool last = i == bins.Length - 1;
            CountBound lower = CountBelow(edges[i], strict: true, t);
            CountBound upper = CountBelow(edges[i + 1], strict: !last, t);
            bins[i] = new HistogramBin(
                edges[i],
                edges[i + 1],
                Math.Max(0, upper.Estimate - lower.Estimate),
                Math.Max(0, upper.Low - lower.High),
                Math.Max(0, upper.High - lower.Low))
            {
                LowSource = Bounded.Weaker(upper.LowSource, lower.HighSource),
                HighSource = Bounded.Weaker(upper.HighSource, lower.LowSource),
            };
        }

        return bins;
    }

    private QuantileEstimate Quantile(double q, double rankShift, double rankError)
    {
        double h = ((Count - 1) * q) + 1;
        if (rankShift == 0 && _extremesExact && (h <= 1 || h >= Count) && (Buckets is not null || _rank is null))
        {
            // The extremes are kept exactly (unless only bounded: then the outermost buckets bound
            // them like any other rank). (A KLL-only sketch answers as it always did.)
            double extreme = h <= 1 ? _min : _max;
            BoundSource exact = Exact ? BoundSource.Exact : BoundSource.Range;
            return new QuantileEstimate(q, extreme, extreme, extreme, Epsilon) { LowSource = exact, HighSource = exact };
        }

        if (Exact && rankShift == 0)
        {
            QuantileEstimate e = _rank!.Estimate(q);
            return e with { LowSource = BoundSource.Exact, HighSource = BoundSource.Exact };
        }

        Span<(double Low, double High, BoundSource Source)> candidates = stackalloc (double, double, BoundSource)[3];
        candidates[0] = (_min, _max, BoundSource.Range);
        int used = 1;
        double rankValue = double.NaN;
        if (_rank is not null)
        {
            double shift = rankError + rankShift;
            rankValue = _rank.View.Quantile(q);
            candidates[used++] = (_rank.View.Quantile(q, -shift), _rank.View.Quantile(q, shift), BoundSource.RankError);
        }

        if (Buckets is not null)
        {
            (_, double low, double high) = Buckets.Quantile(q, rankShift);
            candidates[used++] = (low, high, _bucketSource);
        }

        Bounded b = Bounded.Intersect(candidates[..used]);

        // The KLL estimate where there is one (an observed value on discrete data), kept inside the
        // interval; from the log buckets alone the middle of the interval, within the relative bound
        // of every point in it.
        double value = _rank is not null ? Math.Clamp(rankValue, b.Low, b.High) : b.Middle;
        return new QuantileEstimate(q, value, b.Low, b.High, Epsilon) { LowSource = b.LowSource, HighSource = b.HighSource };
    }
}

/// <summary>Bounds on a count of values, with the source of each end.</summary>
internal readonly record struct CountBound(double Estimate, double Low, BoundSource LowSource, double High, BoundSource HighSource);
