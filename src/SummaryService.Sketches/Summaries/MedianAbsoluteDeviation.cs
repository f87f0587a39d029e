using SummaryService.Sketches.Quantiles;

namespace SummaryService.Sketches.Summaries;

/// <summary>
/// Median absolute deviation MAD = median |x − median| (unscaled), estimated from weighted values
/// (the KLL items, or the log buckets' midpoints), with an interval derived from the count bounds.
/// </summary>
/// <remarks>
/// <para>The estimate is the definition-7 median of the deviations of the weighted values from the
/// estimated median; it is exact while the sketch is exact.</para>
/// <para>Interval: with the true median M inside the median interval [m₋, m₊], the number of values
/// strictly closer than a to M is at most U&lt;(m₊ + a) − L≤(m₋ − a) and the number at distance at
/// most a is at least L≤(m₋ + a) − U&lt;(m₊ − a), where L and U are the lower and upper bounds on
/// the counts below a point (<see cref="SummaryBounds.CountBelow"/>: the KLL part's ±t intersected
/// with the log buckets' exact bounds). The deviation order statistic d₍ⱼ₎ therefore lies between
/// the largest a whose upper count stays below j and the smallest a whose lower count reaches j.
/// Failure budget of the KLL part: δ/2 on the median interval, δ/2 over the eight one-sided count
/// events at the fixed points M ± d₍ⱼ₎; the log buckets' bounds are certain.</para>
/// </remarks>
internal static class MedianAbsoluteDeviation
{
    // Without log buckets: bisection over the data's range down to adjacent doubles (60 halvings of
    // the range), finer than any retained item can resolve.
    private const int BisectionSteps = 60;

    // With log buckets the interval is at least a bucket wide (≈1% of the MAD), so each end is found
    // to 2^−20 of the MAD (~1e-6) by a search that starts at the estimate: both ends lie within a
    // few buckets of it, and every step reads both parts' counts. Each end is rounded outward.
    private const double BucketResolution = 1.0 / (1 << 20);

    /// <summary>
    /// The MAD and its interval, with the source of each end: the weaker of the sources of the two
    /// count bounds that decided it (evaluated at that end).
    /// </summary>
    public static (double Mad, double Low, double High, BoundSource LowSource, BoundSource HighSource) Estimate(SummaryBounds bounds)
    {
        KllSortedView view = bounds.EstimateView!;
        double median = view.Quantile(0.5);
        double mad = MedianOfDeviations(view, median);
        if (bounds.Exact)
        {
            return (mad, mad, mad, BoundSource.Exact, BoundSource.Exact);
        }

        double rankError = bounds.Rank?.MadShift ?? 0;
        QuantileEstimate medianInterval = bounds.MedianForMad();
        double medianLow = medianInterval.Low;
        double medianHigh = medianInterval.High;
        double n = view.Count;
        double span = view.Max - view.Min;
        double h = ((view.Count - 1) * 0.5) + 1;
        double j0 = Math.Floor(h);
        double j1 = Math.Min(j0 + 1, n);
        double f = h - j0;

        double UpperCountCloserThan(double a) =>
            bounds.CountBelow(medianHigh + a, strict: true, rankError).High - bounds.CountBelow(medianLow - a, strict: false, rankError).Low;
        double LowerCountWithin(double a) =>
            bounds.CountBelow(medianLow + a, strict: false, rankError).Low - bounds.CountBelow(medianHigh - a, strict: true, rankError).High;

        double low;
        double high;
        double low0;
        double high0;
        if (bounds.Buckets is null)
        {
            double LowerEnd(double j) => LargestWhere(a => UpperCountCloserThan(a) < j, span, BisectionSteps);
            double UpperEnd(double j) => SmallestWhere(a => LowerCountWithin(a) >= j, span, BisectionSteps);
            low0 = LowerEnd(j0);
            high0 = UpperEnd(j0);
            low = f == 0 ? low0 : low0 + (f * (LowerEnd(j1) - low0));
            high = f == 0 ? high0 : high0 + (f * (UpperEnd(j1) - high0));
        }
        else
        {
            // The lower ends are searched below the estimate and the upper ends above it (the final
            // interval is widened to hold the estimate anyway), and the second order statistic's
            // ends from the first's, which they can only exceed.
            double step = (mad > 0 ? mad : span) * BucketResolution;
            low0 = MonotoneBoundary.Near(a => UpperCountCloserThan(a) < j0, 0, mad, mad, step).LastTrue;
            high0 = MonotoneBoundary.Near(a => LowerCountWithin(a) < j0, mad, span, mad, step).FirstFalse;
            low = f == 0 ? low0 : low0 + (f * (MonotoneBoundary.Near(a => UpperCountCloserThan(a) < j1, low0, mad, low0, step).LastTrue - low0));
            high = f == 0 ? high0 : high0 + (f * (MonotoneBoundary.Near(a => LowerCountWithin(a) < j1, high0, span, high0, step).FirstFalse - high0));
        }

        BoundSource lowSource = Bounded.Weaker(
            Bounded.Weaker(bounds.CountBelow(medianHigh + low0, strict: true, rankError).HighSource, bounds.CountBelow(medianLow - low0, strict: false, rankError).LowSource),
            Bounded.Weaker(medianInterval.LowSource, medianInterval.HighSource));
        BoundSource highSource = Bounded.Weaker(
            Bounded.Weaker(bounds.CountBelow(medianLow + high0, strict: false, rankError).LowSource, bounds.CountBelow(medianHigh - high0, strict: true, rankError).HighSource),
            Bounded.Weaker(medianInterval.LowSource, medianInterval.HighSource));
        return (mad, Math.Min(low, mad), Math.Max(high, mad), lowSource, highSource);
    }

    /// <summary>
    /// The definition-7 median of the weighted values' deviations from <paramref name="centre"/>,
    /// read as <see cref="KllSortedView.Quantile"/> would read it from the sorted deviations.
    /// </summary>
    /// <remarks>
    /// The deviations come out in ascending order by walking outward from the centre on both sides
    /// (the values are sorted), so the walk stops at the two order statistics the median needs —
    /// half the values — without building the deviations' view.
    /// </remarks>
    private static double MedianOfDeviations(KllSortedView view, double centre)
    {
        ReadOnlySpan<double> values = view.Values;
        ReadOnlySpan<long> cumulative = view.CumulativeWeights;
        long n = view.Count;
        double h = ((n - 1) * 0.5) + 1d;
        double floor = Math.Floor(h);

        // As ValueAtRank: a rank at or below 1 is the smallest deviation, at or above n the largest.
        double lowerRank = Math.Clamp(floor, 1, n);
        double upperRank = Math.Clamp(Math.Min(floor + 1, n), 1, n);
        int left = view.UpperBound(centre) - 1;
        int right = left + 1;
        int last = values.Length - 1;
        long running = 0;
        double lower = double.NaN;
        double upper = double.NaN;
        for (int taken = 0; taken <= last; taken++)
        {
            bool takeLeft = right > last || (left >= 0 && centre - values[left] <= values[right] - centre);
            int index = takeLeft ? left-- : right++;
            double deviation = takeLeft ? centre - values[index] : values[index] - centre;
            running += cumulative[index] - (index == 0 ? 0 : cumulative[index - 1]);
            if (double.IsNaN(lower) && (running >= lowerRank || taken == last))
            {
                lower = deviation;
            }

            if (running >= upperRank || taken == last)
            {
                upper = deviation;
                break;
            }
        }

        return lower + ((h - floor) * (upper - lower));
    }

    // Bisection on a monotone predicate over [0, limit], down to adjacent doubles.
    private static double LargestWhere(Func<double, bool> holds, double limit, int steps)
    {
        if (!holds(0))
        {
            return 0;
        }

        return holds(limit) ? limit : MonotoneBoundary.Bisect(holds, 0, limit, 0, steps).LastTrue;
    }

    private static double SmallestWhere(Func<double, bool> holds, double limit, int steps)
    {
        if (holds(0))
        {
            return 0;
        }

        return !holds(limit) ? limit : MonotoneBoundary.Bisect(a => !holds(a), 0, limit, 0, steps).FirstFalse;
    }
}
