using SummaryService.Sketches.Quantiles;

namespace SummaryService.Sketches.Buckets;

/// <summary>
/// The buckets of a <see cref="LogBucketSketch"/> in value order — negative buckets from the largest
/// magnitude down, the zeros, positive buckets upwards — each as the closed interval of doubles it
/// can hold, cut to the exact [min, max], with cumulative counts. Every answer read here is certain:
/// counts are exact, so the r-th smallest value lies in the bucket whose cumulative count first
/// reaches r.
/// </summary>
internal sealed class LogBucketView
{
    private readonly double[] _low;
    private readonly double[] _high;
    private readonly long[] _cumulative;

    private readonly double _min;
    private readonly double _max;

    // False when min and max only bound the values from outside: ranks 1 and n are then read from their buckets like any other.
    private readonly bool _extremesExact;

    private LogBucketView(double[] low, double[] high, long[] cumulative, double relativeError, double min, double max, bool extremesExact)
    {
        _extremesExact = extremesExact;
        _low = low;
        _high = high;
        _cumulative = cumulative;
        RelativeError = relativeError;
        Count = cumulative.Length == 0 ? 0 : cumulative[^1];
        _min = min;
        _max = max;
    }

    /// <summary>Number of values.</summary>
    public long Count { get; }

    /// <summary>(base − 1)/(base + 1) of the scale the buckets were read at; NaN for edge buckets, whose widths are the producer's.</summary>
    public double RelativeError { get; }

    /// <summary>Number of occupied buckets (the zeros count as one).</summary>
    public int BucketCount => _cumulative.Length;

    /// <summary>The buckets as (low, high, count), in value order.</summary>
    public IEnumerable<(double Low, double High, long Count)> Buckets()
    {
        for (int i = 0; i < _cumulative.Length; i++)
        {
            yield return (_low[i], _high[i], _cumulative[i] - (i == 0 ? 0 : _cumulative[i - 1]));
        }
    }

    /// <summary>Reads a sketch whose values lie in [<paramref name="min"/>, <paramref name="max"/>].</summary>
    public static LogBucketView Of(LogBucketSketch sketch, double min, double max) => Of(OccupiedLogBuckets.Of(sketch), min, max);

    /// <summary>
    /// Reads buckets already read out of a sketch whose values lie in [<paramref name="min"/>, <paramref name="max"/>],
    /// which are the smallest and largest value unless <paramref name="extremesExact"/> is false.
    /// </summary>
    public static LogBucketView Of(OccupiedLogBuckets sketch, double min, double max, bool extremesExact = true)
    {
        ExponentialMapping mapping = sketch.Mapping;
        (int[] negIndex, long[] negCount) = sketch.Negative;
        (int[] posIndex, long[] posCount) = sketch.Positive;
        int zeros = sketch.ZeroCount > 0 ? 1 : 0;
        int total = negIndex.Length + zeros + posIndex.Length;
        double[] low = GC.AllocateUninitializedArray<double>(total);
        double[] high = GC.AllocateUninitializedArray<double>(total);
        long[] cumulative = GC.AllocateUninitializedArray<long>(total);
        long running = 0;
        int at = 0;

        // Neighbouring buckets share a boundary: Floor(i + 1) of one is Floor(i) of the next.
        for (int j = negIndex.Length - 1; j >= 0; j--)
        {
            (double l, double h) = mapping.Bounds(negIndex[j]);
            running += negCount[j];
            (low[at], high[at], cumulative[at]) = (Math.Max(-h, min), Math.Min(-l, max), running);
            at++;
        }

        if (zeros == 1)
        {
            running += sketch.ZeroCount;
            (low[at], high[at], cumulative[at]) = (Math.Max(0, min), Math.Min(0, max), running);
            at++;
        }

        double nextFloor = double.NaN;
        int nextIndex = int.MinValue;
        for (int j = 0; j < posIndex.Length; j++)
        {
            int index = posIndex[j];
            double floor = index == nextIndex ? nextFloor : mapping.Floor(index);
            nextFloor = mapping.Floor(index + 1L);
            nextIndex = index + 1;
            running += posCount[j];
            (low[at], high[at], cumulative[at]) = (Math.Max(Math.BitIncrement(floor), min), Math.Min(nextFloor, max), running);
            at++;
        }

        return new LogBucketView(low, high, cumulative, mapping.RelativeError, min, max, extremesExact);
    }

    /// <summary>
    /// Reads edge buckets (<see cref="EdgeBucketSketch"/>) the same way: each occupied bucket is its
    /// closed [lower edge, upper edge] cut to [<paramref name="min"/>, <paramref name="max"/>], which
    /// also bounds the outer buckets that reach to infinity. Every reader of the view then answers
    /// from the producer's edges with no case of its own.
    /// </summary>
    public static LogBucketView OfEdges(EdgeBucketSketch sketch, double min, double max, bool extremesExact = true)
    {
        ArgumentNullException.ThrowIfNull(sketch);
        IReadOnlyList<long> counts = sketch.Counts;
        int occupied = counts.Count(c => c != 0);
        double[] low = GC.AllocateUninitializedArray<double>(occupied);
        double[] high = GC.AllocateUninitializedArray<double>(occupied);
        long[] cumulative = GC.AllocateUninitializedArray<long>(occupied);
        long running = 0;
        int at = 0;
        for (int k = 0; k < counts.Count; k++)
        {
            if (counts[k] != 0)
            {
                (double l, double h) = sketch.Hull(k);
                running += counts[k];
                (low[at], high[at], cumulative[at]) = (Math.Max(l, min), Math.Min(h, max), running);
                at++;
            }
        }

        return new LogBucketView(low, high, cumulative, double.NaN, min, max, extremesExact);
    }

    /// <summary>
    /// Interval holding the definition-7 quantile (Hyndman &amp; Fan 1996) and its estimate, with every
    /// rank shifted outward by <paramref name="rankShift"/> values (the sampling term of a comparison;
    /// 0 for the sample quantile itself).
    /// </summary>
    /// <remarks>
    /// Q = (1 − f)·x₍ⱼ₎ + f·x₍ⱼ₊₁₎ with j = ⌊h⌋, f = h − j, h = (n − 1)q + 1 is increasing in both
    /// order statistics, so it lies between the same combination of their buckets' ends. For values of
    /// one sign that interval's relative half-width about its midpoint is at most (base − 1)/(base + 1).
    /// Where the combination rounds (two different ends), the end is moved out by one ulp to absorb
    /// it; where both ranks lie in one bucket the interval is that bucket's ends exactly.
    /// </remarks>
    public (double Estimate, double Low, double High) Quantile(double q, double rankShift = 0)
    {
        double h = ((Count - 1) * q) + 1;
        double j = Math.Floor(h);
        double f = h - j;
        double next = Math.Min(j + 1, Count);
        double low = Outward(f, LowAt(Math.Floor(j - rankShift)), LowAt(Math.Floor(next - rankShift)), down: true);
        double high = Outward(f, HighAt(Math.Ceiling(j + rankShift)), HighAt(Math.Ceiling(next + rankShift)), down: false);
        double estimate = Combine(f, MiddleAt(j), MiddleAt(next));
        return (Math.Clamp(estimate, low, high), low, high);
    }

    /// <summary>Bounds on the number of values ≤ <paramref name="x"/> (or &lt; x when <paramref name="strict"/>) and an estimate that spreads each bucket evenly.</summary>
    public (double Estimate, long Low, long High) CountBelow(double x, bool strict)
    {
        // Buckets wholly at or below x (or below x) count fully; the one x cuts may count in part.
        // Buckets are disjoint but for shared ends, so at most the next one is touched.
        int whole = Leading(_high, x, strict);
        int touched = whole < _low.Length && (strict ? _low[whole] < x : _low[whole] <= x) ? whole + 1 : whole;
        long low = whole == 0 ? 0 : _cumulative[whole - 1];
        long high = touched == 0 ? 0 : _cumulative[touched - 1];
        double estimate = low;
        for (int i = whole; i < touched; i++)
        {
            long count = _cumulative[i] - (i == 0 ? 0 : _cumulative[i - 1]);
            double width = _high[i] - _low[i];
            estimate += width > 0 ? count * Math.Clamp((x - _low[i]) / width, 0, 1) : count;
        }

        return (estimate, low, high);
    }

    /// <summary>The bucket midpoints with cumulative counts, as a weighted sorted view (for the MAD estimate).</summary>
    public KllSortedView Midpoints()
    {
        double[] values = GC.AllocateUninitializedArray<double>(_cumulative.Length);
        for (int i = 0; i < values.Length; i++)
        {
            values[i] = Middle(i);
        }

        return new KllSortedView(values, (long[])_cumulative.Clone(), Count, _min, _max);
    }

    private static double Combine(double f, double a, double b) => f == 0 ? a : a + (f * (b - a));

    private static double Outward(double f, double a, double b, bool down) =>
        f == 0 || a == b ? a : down ? Math.BitDecrement(Combine(f, a, b)) : Math.BitIncrement(Combine(f, a, b));

    private double Middle(int bucket) => _low[bucket] + ((_high[bucket] - _low[bucket]) / 2);

    // The smallest and largest values, when known exactly, are ranks 1 and n themselves.
    private double LowAt(double rank) => _extremesExact && rank <= 1 ? _min : _extremesExact && rank >= Count ? _max : _low[AtRank(rank)];

    private double HighAt(double rank) => _extremesExact && rank <= 1 ? _min : _extremesExact && rank >= Count ? _max : _high[AtRank(rank)];

    private double MiddleAt(double rank) => _extremesExact && rank <= 1 ? _min : _extremesExact && rank >= Count ? _max : Middle(AtRank(rank));

    // Bucket holding the r-th smallest value, r clamped to [1, n].
    private int AtRank(double rank)
    {
        long r = (long)Math.Clamp(rank, 1, Count);
        int lo = 0;
        int hi = _cumulative.Length - 1;
        while (lo < hi)
        {
            int mid = (lo + hi) >>> 1;
            if (_cumulative[mid] >= r)
            {
                hi = mid;
            }
            else
            {
                lo = mid + 1;
            }
        }

        return lo;
    }

    // Number of leading entries that are < x (strict) or <= x; the entries ascend.
    private static int Leading(double[] sorted, double x, bool strict)
    {
        int lo = 0;
        int hi = sorted.Length;
        while (lo < hi)
        {
            int mid = (lo + hi) >>> 1;
            bool before = strict ? sorted[mid] < x : sorted[mid] <= x;
            if (before)
            {
                lo = mid + 1;
            }
            else
            {
                hi = mid;
            }
        }

        return lo;
    }
}
