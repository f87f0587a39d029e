using MathNet.Numerics.Distributions;
using SummaryService.Sketches.Quantiles;

namespace SummaryService.Server.Statistics;

/// <summary>
/// Compares two merged sketches: quantile shifts whose verdict accounts for both the sketches'
/// approximation and sampling noise, and the Kolmogorov–Smirnov distance with a bound.
/// </summary>
public static class DistributionComparison
{
    /// <summary>
    /// The quantile with an interval read at ranks q·n ± (t + z·sqrt(q(1−q)·n)): t is the sketch's
    /// rank error in values at half the failure budget (Hoeffding, as in the summary's intervals),
    /// and z·sqrt(q(1−q)·n) the distribution-free binomial spread of the rank of a sample quantile,
    /// with z the standard normal quantile at 1 − δ/4. So neither approximation nor sampling noise
    /// alone can make two intervals separate.
    /// </summary>
    public static (double Low, double Value, double High) QuantileInterval(KllSketch sketch, KllSortedView view, double q, double confidence)
    {
        ArgumentNullException.ThrowIfNull(sketch);
        ArgumentNullException.ThrowIfNull(view);
        double delta = 1 - confidence;
        double approximation = sketch.RankErrorCount(delta / 2);
        double z = Normal.InvCDF(0, 1, 1 - (delta / 4));
        double sampling = z * Math.Sqrt(q * (1 - q) * view.Count);
        double shift = approximation + sampling;
        return (view.Quantile(q, -shift), view.Quantile(q), view.Quantile(q, shift));
    }

    /// <summary>How quantile q moved from a to b; significant when the two intervals do not overlap.</summary>
    public static Contract.V1.QuantileShift Shift(KllSketch a, KllSortedView aView, KllSketch b, KllSortedView bView, double q, double confidence)
    {
        var (aLow, aValue, aHigh) = QuantileInterval(a, aView, q, confidence);
        var (bLow, bValue, bHigh) = QuantileInterval(b, bView, q, confidence);
        return new Contract.V1.QuantileShift
        {
            Q = q,
            A = aValue,
            B = bValue,
            Delta = bValue - aValue,
            Low = bLow - aHigh,
            High = bHigh - aLow,
            Significant = aHigh < bLow || bHigh < aLow,
            ALow = aLow,
            AHigh = aHigh,
            BLow = bLow,
            BHigh = bHigh,
        };
    }

    /// <summary>
    /// D = sup_x |F_a(x) − F_b(x)| over the two sketches' estimated CDFs, evaluated at every retained
    /// item of both (the step functions only change there). Each estimated CDF is off by at most
    /// t/n at a point with probability 1 − δ/4 (four one-sided events share δ), so the samples'
    /// distance lies within D ± (t_a/n_a + t_b/n_b). The upper end holds at the true maximizing point;
    /// the lower end is read at the estimated one, which the sketches' coins chose, so it is a
    /// per-point rather than a uniform statement. Exact sketches give the exact two-sample statistic.
    /// </summary>
    public static (double Distance, double Low, double High) KolmogorovSmirnov(KllSketch a, KllSortedView aView, KllSketch b, KllSortedView bView, double confidence)
    {
        ArgumentNullException.ThrowIfNull(a);
        ArgumentNullException.ThrowIfNull(b);
        ArgumentNullException.ThrowIfNull(aView);
        ArgumentNullException.ThrowIfNull(bView);
        if (aView.Count == 0 || bView.Count == 0)
        {
            return (0, 0, 1);
        }

        double na = aView.Count;
        double nb = bView.Count;
        double distance = 0;
        foreach (double x in aView.Values)
        {
            distance = Math.Max(distance, Math.Abs((aView.CountAtOrBelow(x) / na) - (bView.CountAtOrBelow(x) / nb)));
        }

        foreach (double x in bView.Values)
        {
            distance = Math.Max(distance, Math.Abs((aView.CountAtOrBelow(x) / na) - (bView.CountAtOrBelow(x) / nb)));
        }

        double delta = 1 - confidence;
        double slack = (a.RankErrorCount(delta / 4) / na) + (b.RankErrorCount(delta / 4) / nb);
        return (distance, Math.Max(0, distance - slack), Math.Min(1, distance + slack));
    }
}
