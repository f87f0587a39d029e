namespace SummaryService.Sketches.Quantiles;

/// <summary>
/// The retained items of a <see cref="KllSketch"/> in ascending order with cumulative weights:
/// the step function Ŵ(x) = estimated number of values ≤ x, and its inverse.
/// </summary>
/// <remarks>
/// Ranks here are 1-based counts as in Hyndman &amp; Fan (1996): the r-th order statistic x₍ᵣ₎ is
/// the value with r values at or below it. While the sketch is exact every weight is 1 and
/// <see cref="ValueAtRank"/> returns the order statistics themselves.
/// </remarks>
public sealed class KllSortedView
{
    private readonly double[] _values;
    private readonly long[] _cumulative;

    internal KllSortedView(double[] values, long[] cumulative, long count, double min, double max)
    {
        _values = values;
        _cumulative = cumulative;
        Count = count;
        Min = min;
        Max = max;
    }

    /// <summary>Number of values the sketch has seen.</summary>
    public long Count { get; }

    /// <summary>Exact smallest value.</summary>
    public double Min { get; }

    /// <summary>Exact largest value.</summary>
    public double Max { get; }

    /// <summary>Retained items, ascending.</summary>
    public ReadOnlySpan<double> Values => _values;

    /// <summary>Cumulative weights: entry i is the estimated number of values ≤ <c>Values[i]</c> (ties summed on the last of them).</summary>
    public ReadOnlySpan<long> CumulativeWeights => _cumulative;

    /// <summary>Estimated number of values ≤ <paramref name="x"/>; exact outside [min, max].</summary>
    public double CountAtOrBelow(double x)
    {
        if (Count == 0 || x < Min)
        {
            return 0;
        }

        if (x >= Max)
        {
            return Count;
        }

        int index = UpperBound(x) - 1;
        return index < 0 ? 0 : _cumulative[index];
    }

    /// <summary>Estimated number of values &lt; <paramref name="x"/>; exact outside [min, max].</summary>
    public double CountBelow(double x)
    {
        if (Count == 0 || x <= Min)
        {
            return 0;
        }

        if (x > Max)
        {
            return Count;
        }

        int index = LowerBound(x) - 1;
        return index < 0 ? 0 : _cumulative[index];
    }

    /// <summary>
    /// Smallest retained value whose estimated rank reaches <paramref name="rank"/>: the r-th order
    /// statistic when exact. Ranks at or below 1 give the exact minimum and ranks at or above n the
    /// exact maximum, which the sketch tracks even after compaction.
    /// </summary>
    public double ValueAtRank(double rank)
    {
        if (Count == 0)
        {
            return double.NaN;
        }

        if (rank <= 1)
        {
            return Min;
        }

        if (rank >= Count)
        {
            return Max;
        }

        int lo = 0;
        int hi = _cumulative.Length - 1;
        while (lo < hi)
        {
            int mid = (lo + hi) >>> 1;
            if (_cumulative[mid] >= rank)
            {
                hi = mid;
            }
            else
            {
                lo = mid + 1;
            }
        }

        return Math.Clamp(_values[lo], Min, Max);
    }

    /// <summary>
    /// Quantile by Hyndman &amp; Fan definition 7 over the estimated order statistics:
    /// h = (n − 1)·q + 1, Q = x₍⌊h⌋₎ + (h − ⌊h⌋)·(x₍⌊h⌋+1₎ − x₍⌊h⌋₎), with every rank shifted by
    /// <paramref name="rankShift"/> values (negative for a lower bound, positive for an upper bound).
    /// </summary>
    public double Quantile(double q, double rankShift = 0)
    {
        if (Count == 0)
        {
            return double.NaN;
        }

        // Same arithmetic as the reference implementations of definition 7, so exact sketches
        // reproduce them bit for bit.
        double h = ((Count - 1) * q) + 1d;
        double floor = Math.Floor(h);
        double lower = ValueAtRank(floor + rankShift);
        double upper = ValueAtRank(Math.Min(floor + 1, Count) + rankShift);
        return lower + ((h - floor) * (upper - lower));
    }

    /// <summary>Number of leading items at or below <paramref name="x"/> (the items ascend).</summary>
    internal int UpperBound(double x)
    {
        int lo = 0;
        int hi = _values.Length;
        while (lo < hi)
        {
            int mid = (lo + hi) >>> 1;
            if (_values[mid] <= x)
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

    private int LowerBound(double x)
    {
        int lo = 0;
        int hi = _values.Length;
        while (lo < hi)
        {
            int mid = (lo + hi) >>> 1;
            if (_values[mid] < x)
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
