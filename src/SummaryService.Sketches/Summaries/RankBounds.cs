using SummaryService.Sketches.Quantiles;

namespace SummaryService.Sketches.Summaries;

/// <summary>
/// Turns a KLL sketch's sorted view and its rank error into estimates with intervals.
/// </summary>
/// <remarks>
/// <para>t is the Hoeffding bound on the error of the estimated count at or below (or below) any
/// one fixed point: exceeded with probability at most δ = 1 − confidence.</para>
/// <para>A quantile interval uses ranks shifted by t′, the same bound at δ/2: the lower end
/// Q(⌊h⌋ − t′) … lies below the true definition-7 quantile unless the estimated count at one of the
/// two bracketing order statistics is off by more than t′ on the low side, and symmetrically for
/// the upper end, so four one-sided events of probability δ/4 each cover it.</para>
/// </remarks>
internal sealed class RankBounds
{
    public RankBounds(KllSketch sketch, double confidence)
    {
        View = sketch.CreateView();
        double delta = 1 - confidence;
        PointError = sketch.RankErrorCount(delta);
        ValueShift = sketch.RankErrorCount(delta / 2);
        MedianShiftForMad = sketch.RankErrorCount(delta / 4);
        MadShift = sketch.RankErrorCount(delta / 8);
        Epsilon = sketch.Count == 0 ? 0 : PointError / sketch.Count;
    }

    public KllSortedView View { get; }

    /// <summary>t: count error at one point, two-sided, at the confidence.</summary>
    public double PointError { get; }

    /// <summary>t′: rank shift for quantile value intervals.</summary>
    public double ValueShift { get; }

    /// <summary>Rank shift of the median interval used by the MAD: four one-sided events of δ/8.</summary>
    public double MedianShiftForMad { get; }

    /// <summary>Rank shift of the MAD's own count bounds: eight one-sided events of δ/16.</summary>
    public double MadShift { get; }

    /// <summary>ε = t/n.</summary>
    public double Epsilon { get; }

    public long Count => View.Count;

    public QuantileEstimate Estimate(double q) =>
        new(q, View.Quantile(q), View.Quantile(q, -ValueShift), View.Quantile(q, ValueShift), Epsilon);

    /// <summary>Median interval at half the failure budget, for the MAD.</summary>
    public (double Low, double High) MedianIntervalForMad() => (View.Quantile(0.5, -MedianShiftForMad), View.Quantile(0.5, MedianShiftForMad));

    public RankEstimate ShareAtOrBelow(double x)
    {
        double n = Count;
        double estimate = View.CountAtOrBelow(x);
        bool exactHere = x < View.Min || x >= View.Max;
        double slack = exactHere ? 0 : PointError;
        return new RankEstimate(x, estimate / n, Math.Max(0, estimate - slack) / n, Math.Min(n, estimate + slack) / n);
    }

    public HistogramBin[] Histogram(double[] edges)
    {
        var bins = new HistogramBin[edges.Length - 1];
        for (int i = 0; i < bins.Length; i++)
        {
            bool last = i == bins.Length - 1;
            var (lowerEstimate, lowerMin, lowerMax) = CountBelowBounds(edges[i], atOrBelow: false);
            var (upperEstimate, upperMin, upperMax) = CountBelowBounds(edges[i + 1], atOrBelow: last);
            bins[i] = new HistogramBin(
                edges[i],
                edges[i + 1],
                Math.Max(0, upperEstimate - lowerEstimate),
                Math.Max(0, upperMin - lowerMax),
                Math.Max(0, upperMax - lowerMin));
        }

        return bins;
    }

    // Outside [min, max] counts are known exactly; inside they carry ±t.
    private (double Estimate, double Min, double Max) CountBelowBounds(double x, bool atOrBelow)
    {
        double n = Count;
        double estimate = atOrBelow ? View.CountAtOrBelow(x) : View.CountBelow(x);
        bool exactHere = atOrBelow ? (x < View.Min || x >= View.Max) : (x <= View.Min || x > View.Max);
        double slack = exactHere ? 0 : PointError;
        return (estimate, Math.Max(0, estimate - slack), Math.Min(n, estimate + slack));
    }
}
