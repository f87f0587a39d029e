using SummaryService.Sketches.Modes;
using SummaryService.Sketches.Moments;

namespace SummaryService.Sketches.Buckets;

/// <summary>
/// One point of an OpenTelemetry explicit-bounds histogram, as its producer sent it: counts of the
/// buckets between strictly increasing finite edges (bucket k holds (bounds[k−1], bounds[k]]) and the totals.
/// </summary>
/// <param name="Bounds">The edges; valid per <see cref="EdgeBucketSketch.Invalid"/>.</param>
/// <param name="Counts">One count per bucket, one more than the edges; they add up to <paramref name="Count"/>.</param>
/// <param name="Count">Number of values.</param>
/// <param name="Sum">Sum of the values.</param>
/// <param name="Min">Smallest value.</param>
/// <param name="Max">Largest value.</param>
/// <param name="ExtremesExact">False when <paramref name="Min"/> and <paramref name="Max"/> only bound the values from outside (a cumulative difference, <see cref="Since"/>).</param>
public sealed record EdgeHistogramPoint(
    IReadOnlyList<double> Bounds,
    IReadOnlyList<ulong> Counts,
    long Count,
    double Sum,
    double Min,
    double Max,
    bool ExtremesExact = true)
{
    /// <summary>
    /// Why min and max disagree with the buckets (they must lie in the lowest and highest occupied
    /// bucket, else the range and the edges would bound quantiles differently), or null when they agree.
    /// </summary>
    public string? ExtremesOutsideBuckets()
    {
        if (Count == 0)
        {
            return null;
        }

        EdgeBucketSketch buckets = EdgeBucketSketch.Restore(Bounds, Counts);
        (double Low, double High) first = buckets.Hull(FirstOccupied());
        (double Low, double High) last = buckets.Hull(LastOccupied());
        bool fits = Min >= first.Low && Min <= first.High && Max >= last.Low && Max <= last.High;
        return fits ? null : $"min {Min} and max {Max} do not lie in the lowest and highest occupied buckets ([{first.Low}, {first.High}] and [{last.Low}, {last.High}])";
    }

    /// <summary>The sketch of the point: edge buckets, count, sum, min and max in the moments (higher moments unknown), modes not counted.</summary>
    public SeriesSketch ToSketch(SeriesSketchOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        var modes = ModeSketch.Restore(new ModeSketch(options.ModeResolution, options.ModeExactLimit, options.ModeWidth, options.ModeDepth, options.ModeCandidates), Count, null, null, []);
        MomentSketch moments = MomentSketch.FromTotals(Count, Sum, Min, Max, ExtremesExact);
        return SeriesSketch.FromParts(moments, null, null, modes, keepsRank: false, EdgeBucketSketch.Restore(Bounds, Counts));
    }

    /// <summary>
    /// The values recorded after <paramref name="previous"/> up to this point of the same cumulative
    /// stream (data model: a cumulative point covers everything since its start time), or null
    /// when the two cannot be one accumulation: some count went down, or the edges changed.
    /// </summary>
    /// <remarks>
    /// Counts, count and sum subtract. An extreme is exact where this point's is new (below the
    /// earlier minimum, above the earlier maximum): a value recorded in between is it. Otherwise it
    /// is only bounded — from below by the lower edge of the difference's lowest occupied bucket or
    /// this point's minimum, whichever is higher (likewise above) — and the point says so.
    /// </remarks>
    public EdgeHistogramPoint? Since(EdgeHistogramPoint previous)
    {
        ArgumentNullException.ThrowIfNull(previous);
        if (previous.Count == 0)
        {
            return this;
        }

        if (!Bounds.SequenceEqual(previous.Bounds) || Count < previous.Count)
        {
            return null;
        }

        var counts = new ulong[Counts.Count];
        for (int k = 0; k < counts.Length; k++)
        {
            if (Counts[k] < previous.Counts[k])
            {
                return null;
            }

            counts[k] = Counts[k] - previous.Counts[k];
        }

        var difference = new EdgeHistogramPoint(Bounds, counts, Count - previous.Count, Sum - previous.Sum, 0, 0);
        if (difference.Count == 0)
        {
            return difference;
        }

        bool newMin = Min < previous.Min;
        bool newMax = Max > previous.Max;
        EdgeBucketSketch buckets = EdgeBucketSketch.Restore(Bounds, counts);
        double lowest = buckets.Hull(difference.FirstOccupied()).Low;
        double highest = buckets.Hull(difference.LastOccupied()).High;
        return difference with
        {
            Min = newMin ? Min : Math.Max(lowest, Min),
            Max = newMax ? Max : Math.Min(highest, Max),
            ExtremesExact = newMin && newMax,
        };
    }

    private int FirstOccupied() => Counts.Select((c, k) => (c, k)).First(x => x.c != 0).k;

    private int LastOccupied() => Counts.Select((c, k) => (c, k)).Last(x => x.c != 0).k;
}
