using SummaryService.Sketches.Quantiles;

namespace SummaryService.Sketches.Summaries;

/// <summary>
/// The linear walks behind the Kolmogorov–Smirnov distance of two sketches: both sides' points are
/// read in ascending order, so each side's count needs a pointer that only moves forward rather than
/// a binary search per point. Differences of shares are kept as integers, |a/na − b/nb|·na·nb, so
/// that equal shares compare equal and each share is rounded once.
/// </summary>
internal static class DistanceWalks
{
    /// <summary>|a/na − b/nb|·na·nb.</summary>
    public static Int128 Difference(long a, long na, long b, long nb) => Int128.Abs(((Int128)a * nb) - ((Int128)b * na));
}

/// <summary>
/// A sorted view's step function Ŵ(x) read at points that never decrease: the same figures as
/// <see cref="KllSortedView.CountAtOrBelow"/> (exact outside [min, max]).
/// </summary>
internal struct AscendingCounts(KllSortedView view)
{
    private int _passed;

    public long CountAtOrBelow(double x)
    {
        if (view.Count == 0 || x < view.Min)
        {
            return 0;
        }

        if (x >= view.Max)
        {
            return view.Count;
        }

        ReadOnlySpan<double> values = view.Values;
        while (_passed < values.Length && values[_passed] <= x)
        {
            _passed++;
        }

        return _passed == 0 ? 0 : view.CumulativeWeights[_passed - 1];
    }
}

/// <summary>
/// Both sides' log buckets at one scale, bucket by bucket in value order: at the upper end of every
/// bucket both CDFs are known exactly (<see cref="Low"/> is the largest difference there); inside a
/// bucket each CDF stays between its values at the bucket's two ends (<see cref="High"/> is the
/// largest cross difference of those).
/// </summary>
internal struct BucketDistanceWalk(long na, long nb)
{
    private long _aBefore;
    private long _bBefore;

    /// <summary>The certain lower bound of the distance so far, times na·nb.</summary>
    public Int128 Low { get; private set; }

    /// <summary>The certain upper bound of the distance so far, times na·nb.</summary>
    public Int128 High { get; private set; }

    /// <summary>One bucket (the same interval on both sides) holding the given counts.</summary>
    public void Step(long aCount, long bCount)
    {
        long aAfter = _aBefore + aCount;
        long bAfter = _bBefore + bCount;
        Low = Int128.Max(Low, DistanceWalks.Difference(aAfter, na, bAfter, nb));
        High = Int128.Max(High, Int128.Max(DistanceWalks.Difference(aAfter, na, _bBefore, nb), DistanceWalks.Difference(_aBefore, na, bAfter, nb)));
        (_aBefore, _bBefore) = (aAfter, bAfter);
    }

    /// <summary>
    /// The union of both sides' occupied buckets of one sign (indices ascending in each array), in
    /// ascending index order, or descending for the negative side (larger magnitudes are smaller values).
    /// </summary>
    public void Over((int[] Indices, long[] Counts) a, (int[] Indices, long[] Counts) b, bool descending)
    {
        int direction = descending ? -1 : 1;
        int i = descending ? a.Indices.Length - 1 : 0;
        int j = descending ? b.Indices.Length - 1 : 0;
        while ((uint)i < (uint)a.Indices.Length || (uint)j < (uint)b.Indices.Length)
        {
            bool hasA = (uint)i < (uint)a.Indices.Length;
            bool hasB = (uint)j < (uint)b.Indices.Length;

            // Which index comes first in the walk's direction; equal indices are one bucket.
            int order = !hasA ? 1 : !hasB ? -1 : direction * a.Indices[i].CompareTo(b.Indices[j]);
            long aCount = order <= 0 ? a.Counts[i] : 0;
            long bCount = order >= 0 ? b.Counts[j] : 0;
            Step(aCount, bCount);
            i += order <= 0 ? direction : 0;
            j += order >= 0 ? direction : 0;
        }
    }
}
