namespace SummaryService.Sketches.Buckets;

/// <summary>
/// The values a cumulative exponential histogram point added since an earlier point of its stream
/// (OpenTelemetry metrics data model: a cumulative point covers everything since its start time, so
/// two points of one accumulation differ by exactly what was recorded between them).
/// </summary>
/// <remarks>
/// <para>Both points are first brought to the smaller of their scales: index i at scale s is index
/// i &gt;&gt; d at scale s − d (the data model's downscaling, which merges adjacent buckets and loses
/// nothing a coarser bucket can say). Counts, zero count, count and sum then subtract.</para>
/// <para>The extremes of the difference are not in general known from two cumulative points. Where
/// the later minimum is below the earlier one, a value recorded in between is that minimum, so it is
/// exact (likewise the maximum). Otherwise the smallest value lies in the difference's lowest
/// occupied bucket (or is 0 when it counts zeros and no negatives) and is at or above the later
/// minimum: the bucket's lower edge, or that minimum when higher, bounds it from below, and the
/// point says its extremes are bounds (<see cref="ExponentialHistogramPoint.ExtremesExact"/>).</para>
/// </remarks>
public static class ExponentialHistogramDifference
{
    /// <summary>
    /// The point of the values recorded after <paramref name="previous"/> up to <paramref name="current"/>,
    /// or null when some count went down: the stream was reset, and the current point is all new.
    /// Both points must be consistent (count equals zero count plus bucket counts) and have extremes.
    /// </summary>
    public static ExponentialHistogramPoint? Since(ExponentialHistogramPoint previous, ExponentialHistogramPoint current)
    {
        ArgumentNullException.ThrowIfNull(previous);
        ArgumentNullException.ThrowIfNull(current);
        if (previous.Count == 0)
        {
            return current;
        }

        int scale = Math.Min(previous.Scale, current.Scale);
        long count = current.Count - previous.Count;
        long zeros = current.ZeroCount - previous.ZeroCount;
        if (count < 0 || zeros < 0
            || Subtract(previous.PositiveOffset, previous.Positive, previous.Scale - scale, current.PositiveOffset, current.Positive, current.Scale - scale) is not var (positiveOffset, positive)
            || Subtract(previous.NegativeOffset, previous.Negative, previous.Scale - scale, current.NegativeOffset, current.Negative, current.Scale - scale) is not var (negativeOffset, negative))
        {
            return null;
        }

        var difference = new ExponentialHistogramPoint(scale, zeros, positiveOffset, positive, negativeOffset, negative, count, current.Sum - previous.Sum, 0, 0);
        if (count == 0)
        {
            return difference;
        }

        // A new extreme was recorded in between; zeros with nothing beyond them are the extreme exactly.
        bool newMin = current.Min < previous.Min;
        bool newMax = current.Max > previous.Max;
        bool zeroMin = zeros > 0 && negative.Length == 0;
        bool zeroMax = zeros > 0 && positive.Length == 0;
        (double lowest, double highest) = OuterBucketEdges(difference);
        return difference with
        {
            Min = newMin ? current.Min : Math.Max(lowest, current.Min),
            Max = newMax ? current.Max : Math.Min(highest, current.Max),
            ExtremesExact = (newMin || zeroMin) && (newMax || zeroMax),
        };
    }

    // The smallest and largest value the occupied buckets allow: the outer edges (the mapping's own
    // bucket bounds) of the lowest and highest occupied bucket, or 0 where zeros are the lowest
    // (highest) values. Edges are read at the finest scale the mapping computes, at most the
    // point's (a coarser bucket holds the finer one).
    private static (double Lowest, double Highest) OuterBucketEdges(ExponentialHistogramPoint point)
    {
        int scale = Math.Min(point.Scale, ExponentialMapping.MaxScale);
        int shift = point.Scale - scale;
        ExponentialMapping mapping = ExponentialMapping.ForScale(scale);
        int Index(long unshifted) => (int)(unshifted >> shift);
        double lowest = point.Negative.Count > 0 ? -mapping.Bounds(Index((long)point.NegativeOffset + point.Negative.Count - 1)).High
            : point.ZeroCount > 0 ? 0
            : mapping.Bounds(Index(point.PositiveOffset)).Low;
        double highest = point.Positive.Count > 0 ? mapping.Bounds(Index((long)point.PositiveOffset + point.Positive.Count - 1)).High
            : point.ZeroCount > 0 ? 0
            : -mapping.Bounds(Index(point.NegativeOffset)).Low;
        return (lowest, highest);
    }

    // Counts of one sign, current minus previous, each folded right by its shift; null when a count
    // would be negative. The result is trimmed to its occupied span (empty when nothing is left).
    private static (int Offset, ulong[] Counts)? Subtract(int previousOffset, IReadOnlyList<ulong> previous, int previousShift, int currentOffset, IReadOnlyList<ulong> current, int currentShift)
    {
        long low = long.MaxValue;
        long high = long.MinValue;
        foreach (var (offset, counts, shift) in new[] { (previousOffset, previous, previousShift), (currentOffset, current, currentShift) })
        {
            if (counts.Count > 0)
            {
                low = Math.Min(low, (long)offset >> shift);
                high = Math.Max(high, ((long)offset + counts.Count - 1) >> shift);
            }
        }

        if (low > high)
        {
            return (0, []);
        }

        var differences = new long[high - low + 1];
        for (int j = 0; j < current.Count; j++)
        {
            differences[(((long)currentOffset + j) >> currentShift) - low] += (long)current[j];
        }

        for (int j = 0; j < previous.Count; j++)
        {
            differences[(((long)previousOffset + j) >> previousShift) - low] -= (long)previous[j];
        }

        int first = Array.FindIndex(differences, d => d != 0);
        if (first < 0)
        {
            return (0, []);
        }

        int last = Array.FindLastIndex(differences, d => d != 0);
        var kept = new ulong[last - first + 1];
        for (int i = first; i <= last; i++)
        {
            if (differences[i] < 0)
            {
                return null;
            }

            kept[i - first] = (ulong)differences[i];
        }

        // Negative differences outside the kept span are caught too: they are non-zero, so inside it.
        return ((int)(low + first), kept);
    }
}
