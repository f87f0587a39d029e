using SummaryService.Sketches.Quantiles;

namespace SummaryService.Sketches.Summaries;

/// <summary>
/// Median absolute deviation MAD = median |x − median| (unscaled), read from the weighted items of a
/// KLL sketch, with an interval derived from the rank bounds.
/// </summary>
/// <remarks>
/// <para>The estimate is the definition-7 median of the deviations of the retained items from the
/// estimated median, with their weights; it is exact while the sketch is exact.</para>
/// <para>Interval: with the true median M inside the median interval [m₋, m₊], the number of values
/// strictly closer than a to M is at most Ŵ⁻(m₊ + a) − Ŵ(m₋ − a) + 2t and the number at distance at
/// most a is at least Ŵ(m₋ + a) − Ŵ⁻(m₊ − a) − 2t. The deviation order statistic d₍ⱼ₎ therefore lies
/// between the largest a whose upper count stays below j and the smallest a whose lower count reaches
/// j. Failure budget: δ/2 on the median interval, δ/2 over the eight one-sided count events at the
/// fixed points M ± d₍ⱼ₎.</para>
/// </remarks>
internal static class MedianAbsoluteDeviation
{
    // 2^−60 of the data's range: finer than any retained item can resolve.
    private const int BisectionSteps = 60;

    public static (double Mad, double Low, double High) Estimate(RankBounds bounds, bool exact)
    {
        KllSortedView view = bounds.View;
        double median = view.Quantile(0.5);
        double mad = Deviations(view, median).Quantile(0.5);
        if (exact)
        {
            return (mad, mad, mad);
        }

        var (medianLow, medianHigh) = bounds.MedianIntervalForMad();
        double t = bounds.MadShift;
        double n = view.Count;
        double span = view.Max - view.Min;
        double h = ((view.Count - 1) * 0.5) + 1;
        double j0 = Math.Floor(h);
        double j1 = Math.Min(j0 + 1, n);
        double f = h - j0;

        double UpperCountCloserThan(double a) =>
            Math.Min(n, view.CountBelow(medianHigh + a) + t) - Math.Max(0, view.CountAtOrBelow(medianLow - a) - t);
        double LowerCountWithin(double a) =>
            Math.Max(0, view.CountAtOrBelow(medianLow + a) - t) - Math.Min(n, view.CountBelow(medianHigh - a) + t);

        double LowerEnd(double j) => LargestWhere(a => UpperCountCloserThan(a) < j, span);
        double UpperEnd(double j) => SmallestWhere(a => LowerCountWithin(a) >= j, span);

        double low0 = LowerEnd(j0);
        double high0 = UpperEnd(j0);
        double low = f == 0 ? low0 : low0 + (f * (LowerEnd(j1) - low0));
        double high = f == 0 ? high0 : high0 + (f * (UpperEnd(j1) - high0));
        return (mad, Math.Min(low, mad), Math.Max(high, mad));
    }

    /// <summary>Deviations of the retained items from <paramref name="centre"/>, ascending, with the items' weights.</summary>
    private static KllSortedView Deviations(KllSortedView view, double centre)
    {
        ReadOnlySpan<double> values = view.Values;
        ReadOnlySpan<long> cumulative = view.CumulativeWeights;
        int split = 0;
        while (split < values.Length && values[split] <= centre)
        {
            split++;
        }

        var deviations = new double[values.Length];
        var weights = new long[values.Length];
        int left = split - 1;
        int right = split;
        for (int write = 0; write < deviations.Length; write++)
        {
            bool takeLeft = right >= values.Length || (left >= 0 && centre - values[left] <= values[right] - centre);
            int index = takeLeft ? left-- : right++;
            deviations[write] = takeLeft ? centre - values[index] : values[index] - centre;
            long weight = cumulative[index] - (index == 0 ? 0 : cumulative[index - 1]);
            weights[write] = (write == 0 ? 0 : weights[write - 1]) + weight;
        }

        return new KllSortedView(deviations, weights, view.Count, deviations[0], deviations[^1]);
    }

    // Bisection on a monotone predicate over [0, limit]; stops when no double lies strictly between.
    private static double LargestWhere(Func<double, bool> holds, double limit)
    {
        if (!holds(0))
        {
            return 0;
        }

        if (holds(limit))
        {
            return limit;
        }

        double lo = 0;
        double hi = limit;
        for (int step = 0; step < BisectionSteps; step++)
        {
            double mid = lo + ((hi - lo) / 2);
            if (mid <= lo || mid >= hi)
            {
                break;
            }

            if (holds(mid))
            {
                lo = mid;
            }
            else
            {
                hi = mid;
            }
        }

        return lo;
    }

    private static double SmallestWhere(Func<double, bool> holds, double limit)
    {
        if (holds(0))
        {
            return 0;
        }

        if (!holds(limit))
        {
            return limit;
        }

        double lo = 0;
        double hi = limit;
        for (int step = 0; step < BisectionSteps; step++)
        {
            double mid = lo + ((hi - lo) / 2);
            if (mid <= lo || mid >= hi)
            {
                break;
            }

            if (holds(mid))
            {
                hi = mid;
            }
            else
            {
                lo = mid;
            }
        }

        return hi;
    }
}
