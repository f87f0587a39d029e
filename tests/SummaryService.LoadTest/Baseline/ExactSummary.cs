using System.Buffers;
using SummaryService.Contract.V1;

namespace SummaryService.LoadTest.Baseline;

/// <summary>
/// Summaries the exact way: copy the window's values, sort them, read order statistics. It fills the
/// count, moments, extremes and quantiles of the contract's Summary (not modes, MAD or histograms, so
/// the comparison, if anything, favours this side).
/// </summary>
public static class ExactSummary
{
    private static readonly double[] DefaultQuantiles = [0, 0.25, 0.5, 0.75, 0.9, 0.99, 1];

    /// <summary>The summary of the selected series' values in [from, to).</summary>
    public static Summary Of(List<RawSeries> series, long from, long to, IReadOnlyList<double> quantiles)
    {
        long bound = 0;
        foreach (RawSeries s in series)
        {
            bound += s.CountAtMost(from, to);
        }

        double[] buffer = ArrayPool<double>.Shared.Rent((int)Math.Max(1, bound));
        try
        {
            int n = 0;
            foreach (RawSeries s in series)
            {
                n += s.CopyWindow(from, to, buffer.AsSpan(n));
            }

            Span<double> values = buffer.AsSpan(0, n);
            values.Sort();
            return FromSorted(values, quantiles.Count == 0 ? DefaultQuantiles : quantiles);
        }
        finally
        {
            ArrayPool<double>.Shared.Return(buffer);
        }
    }

    private static Summary FromSorted(ReadOnlySpan<double> x, IReadOnlyList<double> quantiles)
    {
        var summary = new Summary { Count = (ulong)x.Length, Exact = true, Confidence = 0.99 };
        if (x.Length == 0)
        {
            return summary;
        }

        double sum = 0;
        foreach (double v in x)
        {
            sum += v;
        }

        double mean = sum / x.Length;
        double m2 = 0;
        foreach (double v in x)
        {
            m2 += (v - mean) * (v - mean);
        }

        summary.Sum = sum;
        summary.Mean = mean;
        summary.Min = x[0];
        summary.Max = x[^1];
        summary.Range = x[^1] - x[0];
        summary.PopulationVariance = m2 / x.Length;
        if (x.Length > 1)
        {
            summary.Variance = m2 / (x.Length - 1);
            summary.Stddev = Math.Sqrt(summary.Variance);
        }

        foreach (double q in quantiles)
        {
            double value = Definition7(x, q);
            summary.Quantiles.Add(new QuantileEstimate { Q = q, Value = value, Low = value, High = value });
        }

        summary.Iqr = Definition7(x, 0.75) - Definition7(x, 0.25);
        return summary;
    }

    // Hyndman & Fan (1996) definition 7: linear interpolation between order statistics at h = (n−1)q.
    private static double Definition7(ReadOnlySpan<double> x, double q)
    {
        double h = (x.Length - 1) * q;
        int low = (int)Math.Floor(h);
        int high = Math.Min(low + 1, x.Length - 1);
        return x[low] + ((h - low) * (x[high] - x[low]));
    }
}
