using MathNet.Numerics.Statistics;

namespace SummaryService.Sketches.Tests.Support;

/// <summary>Exact answers over a sorted copy of all values, computed by MathNet.Numerics or by counting.</summary>
internal sealed class ExactReference
{
    private readonly double[] _sorted;

    public ExactReference(IEnumerable<double> values)
    {
        _sorted = values.ToArray();
        Array.Sort(_sorted);
    }

    public int Count => _sorted.Length;

    /// <summary>Hyndman &amp; Fan definition 7 as implemented by MathNet.Numerics.</summary>
    public double Quantile(double q) => SortedArrayStatistics.QuantileCustom(_sorted, q, QuantileDefinition.R7);

    /// <summary>Number of values ≤ x.</summary>
    public long CountAtOrBelow(double x)
    {
        int index = Array.BinarySearch(_sorted, x);
        if (index < 0)
        {
            return ~index;
        }

        while (index < _sorted.Length && _sorted[index] == x)
        {
            index++;
        }

        return index;
    }

    /// <summary>Number of values &lt; x.</summary>
    public long CountBelow(double x)
    {
        int index = Array.BinarySearch(_sorted, x);
        if (index < 0)
        {
            return ~index;
        }

        while (index > 0 && _sorted[index - 1] == x)
        {
            index--;
        }

        return index;
    }

    /// <summary>Median absolute deviation: definition-7 median of |x − median| (MathNet for both medians).</summary>
    public double Mad()
    {
        double median = Quantile(0.5);
        var deviations = _sorted.Select(v => Math.Abs(v - median)).ToArray();
        Array.Sort(deviations);
        return SortedArrayStatistics.QuantileCustom(deviations, 0.5, QuantileDefinition.R7);
    }
}
