using SummaryService.Sketches.Modes;
using SummaryService.Sketches.Moments;

namespace SummaryService.Sketches.Buckets;

/// <summary>
/// One point of an OpenTelemetry exponential histogram, as its producer sent it: counts per bucket
/// index at the point's scale (base = 2^(2^−scale); index i holds magnitudes in (base^i, base^(i+1)]),
/// a count of zeros, and the totals.
/// </summary>
/// <param name="Scale">The point's scale; may be finer than the log buckets keep.</param>
/// <param name="ZeroCount">Values equal to zero.</param>
/// <param name="PositiveOffset">Index of the first positive count.</param>
/// <param name="Positive">Counts of consecutive positive buckets from <paramref name="PositiveOffset"/>.</param>
/// <param name="NegativeOffset">Index of the first negative count (indices of the magnitude).</param>
/// <param name="Negative">Counts of consecutive negative buckets from <paramref name="NegativeOffset"/>.</param>
/// <param name="Count">Number of values; equals the zero count plus every bucket count.</param>
/// <param name="Sum">Sum of the values.</param>
/// <param name="Min">Smallest value.</param>
/// <param name="Max">Largest value.</param>
/// <param name="ExtremesExact">False when <paramref name="Min"/> and <paramref name="Max"/> only bound the values from outside (see <see cref="ExponentialHistogramDifference"/>).</param>
public sealed record ExponentialHistogramPoint(
    int Scale,
    long ZeroCount,
    int PositiveOffset,
    IReadOnlyList<ulong> Positive,
    int NegativeOffset,
    IReadOnlyList<ulong> Negative,
    long Count,
    double Sum,
    double Min,
    double Max,
    bool ExtremesExact = true);

/// <summary>
/// Series sketches from exponential histogram points. The log buckets use the same index mapping,
/// so a point's counts go in unchanged, only folded to a coarser scale where the point's is finer
/// than the sketch keeps (index i at scale s is index i &gt;&gt; d at scale s − d: the data model's
/// downscaling, exact). The values themselves are unknown, so the sketch has no KLL part, its modes
/// are read from the buckets' density, and its moments hold only count, sum, min and max.
/// </summary>
public static class ExponentialHistogramImport
{
    /// <summary>
    /// Why the point cannot be merged exactly into log buckets of the given options, or null when it
    /// can: its buckets must lie within the magnitudes a double holds, and fit the bucket limit at
    /// the finest scale not above both the point's and the sketch's (that scale is then used).
    /// </summary>
    public static string? Unrepresentable(ExponentialHistogramPoint point, SeriesSketchOptions options)
    {
        ArgumentNullException.ThrowIfNull(point);
        ArgumentNullException.ThrowIfNull(options);
        if (TargetScale(point, options, out string? reason) is not { } scale)
        {
            return reason;
        }

        return ExtremeOutsideBuckets(point, scale);
    }

    /// <summary>The sketch of the point; the point must be representable (<see cref="Unrepresentable"/>) and consistent.</summary>
    public static SeriesSketch ToSketch(ExponentialHistogramPoint point, SeriesSketchOptions options)
    {
        ArgumentNullException.ThrowIfNull(point);
        ArgumentNullException.ThrowIfNull(options);
        int scale = TargetScale(point, options, out string? reason) ?? throw new ArgumentException(reason, nameof(point));
        int shift = point.Scale - scale;
        var buckets = LogBucketSketch.Restore(scale, options.LogMaxBuckets, point.ZeroCount, Folded(point.PositiveOffset, point.Positive, shift), Folded(point.NegativeOffset, point.Negative, shift));
        if (buckets.Count != point.Count)
        {
            throw new ArgumentException($"the buckets hold {buckets.Count} values but count is {point.Count}.", nameof(point));
        }

        var modes = ModeSketch.Restore(new ModeSketch(options.ModeResolution, options.ModeExactLimit, options.ModeWidth, options.ModeDepth, options.ModeCandidates), point.Count, null, null, []);
        MomentSketch moments = MomentSketch.FromTotals(point.Count, point.Sum, point.Min, point.Max, point.ExtremesExact);
        return SeriesSketch.FromParts(moments, null, buckets, modes, keepsRank: false);
    }

    private static int? TargetScale(ExponentialHistogramPoint point, SeriesSketchOptions options, out string? reason)
    {
        reason = null;
        if (point.Scale < ExponentialMapping.MinScale)
        {
            reason = $"has scale {point.Scale}; log buckets go down to scale {ExponentialMapping.MinScale}";
            return null;
        }

        int scale = Math.Min(point.Scale, options.LogScale);
        while (true)
        {
            int shift = point.Scale - scale;
            var mapping = ExponentialMapping.ForScale(scale);
            int lowest = mapping.IndexOf(double.Epsilon);
            int highest = mapping.IndexOf(double.MaxValue);
            int span = 0;
            foreach (var (offset, counts) in new[] { (point.PositiveOffset, point.Positive), (point.NegativeOffset, point.Negative) })
            {
                if (Occupied(offset, counts) is not var (first, last))
                {
                    continue;
                }

                (long low, long high) = (first >> shift, last >> shift);
                if (low < lowest || high > highest)
                {
                    reason = $"has buckets from index {first} to {last} at scale {point.Scale}, beyond the magnitudes a double holds";
                    return null;
                }

                span = Math.Max(span, (int)(high - low + 1));
            }

            if (span <= options.LogMaxBuckets)
            {
                return scale;
            }

            if (scale == ExponentialMapping.MinScale)
            {
                reason = $"spans more than {options.LogMaxBuckets} buckets even at scale {scale}";
                return null;
            }

            scale--;
        }
    }

    // Min and max must lie where the buckets say the smallest and largest values are (the lowest
    // and highest occupied bucket of their sign, or zero), else the range and the buckets would
    // bound quantiles differently. One bucket of slack at the folded scale allows a producer whose
    // index function rounds differently at a bucket's very edge.
    private static string? ExtremeOutsideBuckets(ExponentialHistogramPoint point, int scale)
    {
        int shift = point.Scale - scale;
        var mapping = ExponentialMapping.ForScale(scale);
        (long First, long Last)? positive = Occupied(point.PositiveOffset, point.Positive);
        (long First, long Last)? negative = Occupied(point.NegativeOffset, point.Negative);
        bool zeros = point.ZeroCount > 0;
        bool minFits = negative is { } n
            ? point.Min < 0 && Near(mapping.IndexOf(-point.Min), n.Last >> shift)
            : zeros ? point.Min == 0 : positive is { } p && point.Min > 0 && Near(mapping.IndexOf(point.Min), p.First >> shift);
        bool maxFits = positive is { } q
            ? point.Max > 0 && Near(mapping.IndexOf(point.Max), q.Last >> shift)
            : zeros ? point.Max == 0 : negative is { } m && point.Max < 0 && Near(mapping.IndexOf(-point.Max), m.First >> shift);
        return minFits && maxFits ? null : $"has min {point.Min} and max {point.Max}, which do not lie in its lowest and highest occupied buckets";
    }

    private static bool Near(int index, long expected) => Math.Abs(index - expected) <= 1;

    // First and last index with a non-zero count, or null when every count is zero.
    private static (long First, long Last)? Occupied(int offset, IReadOnlyList<ulong> counts)
    {
        int first = -1;
        int last = -1;
        for (int j = 0; j < counts.Count; j++)
        {
            if (counts[j] != 0)
            {
                first = first < 0 ? j : first;
                last = j;
            }
        }

        return first < 0 ? null : ((long)offset + first, (long)offset + last);
    }

    private static IEnumerable<(int Index, long Count)> Folded(int offset, IReadOnlyList<ulong> counts, int shift)
    {
        for (int j = 0; j < counts.Count; j++)
        {
            if (counts[j] != 0)
            {
                yield return ((int)(((long)offset + j) >> shift), checked((long)counts[j]));
            }
        }
    }
}
