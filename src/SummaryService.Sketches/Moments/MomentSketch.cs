using SummaryService.Sketches.Quantiles;

namespace SummaryService.Sketches.Moments;

/// <summary>
/// Count, extremes, compensated sum, mean and the central moment sums M2, M3, M4 of a stream.
/// </summary>
/// <remarks>
/// Values are folded in one at a time with the Welford/Terriberry update and whole sketches are
/// combined with the pairwise formulas of Chan, Golub &amp; LeVeque (1979) and Pébay (2008,
/// SAND2008-6212). Both avoid the textbook Σx² − n·mean², which loses every significant digit
/// on data such as NIST StRD NumAcc4 (values near 1e7 with spread 0.1). A span is first
/// summarised on its own with a shifted two-pass computation, which is exact enough and much
/// faster than the per-value update, then merged in.
/// </remarks>
public sealed partial class MomentSketch
{
    private double _sum;
    private double _sumCompensation;

    /// <summary>Number of values folded in.</summary>
    public long Count { get; private set; }

    /// <summary>Smallest value; <see cref="double.NaN"/> while empty.</summary>
    public double Min { get; private set; } = double.NaN;

    /// <summary>Largest value; <see cref="double.NaN"/> while empty.</summary>
    public double Max { get; private set; } = double.NaN;

    /// <summary>Arithmetic mean Σx / n (normalizer n, unbiased); <see cref="double.NaN"/> while empty, when it is undefined.</summary>
    public double Mean { get; private set; } = double.NaN;

    /// <summary>Σ(x − mean)².</summary>
    public double M2 { get; private set; }

    /// <summary>Σ(x − mean)³.</summary>
    public double M3 { get; private set; }

    /// <summary>Σ(x − mean)⁴.</summary>
    public double M4 { get; private set; }

    /// <summary>
    /// False when some values arrived only as totals (count, sum, min, max; see
    /// <see cref="FromTotals"/>): M2, M3 and M4 then say nothing, and the figures built on them are absent.
    /// </summary>
    public bool CentralMomentsKnown { get; private set; } = true;

    /// <summary>
    /// False when some values arrived with only bounds on their extremes (the difference of two
    /// cumulative histogram points: its smallest and largest value are known only to lie in its
    /// outermost buckets). <see cref="Min"/> is then at or below the smallest value and
    /// <see cref="Max"/> at or above the largest, not values seen. Merges keep it false.
    /// </summary>
    public bool ExtremesExact { get; private set; } = true;

    /// <summary>Sum of the values, Neumaier-compensated so that it stays exact to the last bits on long streams.</summary>
    public double Sum => _sum + _sumCompensation;

    /// <summary>Folds in one finite value.</summary>
    public void Add(double value)
    {
        FiniteValues.Require(value);
        AddUnchecked(value);
    }

    /// <summary>Folds in a span of finite values; a span with a NaN or infinity is rejected whole.</summary>
    public void Add(ReadOnlySpan<double> values)
    {
        FiniteValues.Require(values);
        AddUnchecked(values);
    }

    internal void AddUnchecked(double value)
    {
        long n1 = Count;
        long n = n1 + 1;
        if (n1 == 0)
        {
            Count = 1;
            Min = Max = Mean = value;
            AddToSum(value);
            return;
        }

        double delta = value - Mean;
        double deltaN = delta / n;
        double deltaN2 = deltaN * deltaN;
        double term1 = delta * deltaN * n1;
        Mean += deltaN;
        M4 += (term1 * deltaN2 * (((double)n * n) - (3.0 * n) + 3.0)) + (6.0 * deltaN2 * M2) - (4.0 * deltaN * M3);
        M3 += (term1 * deltaN * (n - 2)) - (3.0 * deltaN * M2);
        M2 += term1;
        ForgetSpreadIfUnknown();
        Count = n;
        if (value < Min)
        {
            Min = value;
        }

        if (value > Max)
        {
            Max = value;
        }

        AddToSum(value);
    }

    internal void AddUnchecked(ReadOnlySpan<double> values)
    {
        if (values.Length == 0)
        {
            return;
        }

        if (values.Length < 4)
        {
            foreach (double v in values)
            {
                AddUnchecked(v);
            }

            return;
        }

        // First pass: a provisional mean, extremes and the compensated sum. The sum runs in locals,
        // the same steps as AddToSum: through the fields, every step waited on the last one's store.
        double naive = 0;
        (double min, double max) = OrderKeys.RangeOf(values);
        double sum = _sum;
        double compensation = _sumCompensation;
        for (int i = 0; i < values.Length; i++)
        {
            double v = values[i];
            naive += v;
            double t = sum + v;
            compensation += Math.Abs(sum) >= Math.Abs(v) ? (sum - t) + v : (v - t) + sum;
            sum = t;
        }

        _sum = sum;
        _sumCompensation = compensation;

        int count = values.Length;
        double shift = naive / count;

        // Second pass: power sums about the provisional mean; the small residual mean c
        // corrects it without the cancellation of raw power sums.
        double s1 = 0, s2 = 0, s3 = 0, s4 = 0;
        for (int i = 0; i < values.Length; i++)
        {
            double d = values[i] - shift;
            double d2 = d * d;
            s1 += d;
            s2 += d2;
            s3 += d2 * d;
            s4 += d2 * d2;
        }

        double c = s1 / count;
        double c2 = c * c;
        double m2 = s2 - (count * c2);
        double m3 = s3 - (3.0 * c * s2) + (2.0 * count * c2 * c);
        double m4 = s4 - (4.0 * c * s3) + (6.0 * c2 * s2) - (3.0 * count * c2 * c2);
        CombineWith(count, min, max, shift + c, Math.Max(m2, 0.0), m3, Math.Max(m4, 0.0));
    }

    /// <summary>
    /// A sketch of values known only by their count, sum and extremes (a histogram's totals): the
    /// mean is sum / count; M2, M3 and M4 are unknown, and stay so through merges. With
    /// <paramref name="extremesExact"/> false, <paramref name="min"/> and <paramref name="max"/>
    /// are only outer bounds on the values (see <see cref="ExtremesExact"/>).
    /// </summary>
    public static MomentSketch FromTotals(long count, double sum, double min, double max, bool extremesExact = true)
    {
        ArgumentOutOfRangeException.ThrowIfNegativeOrZero(count);
        FiniteValues.Require(sum);
        FiniteValues.Require(min);
        FiniteValues.Require(max);
        if (min > max)
        {
            throw new ArgumentException($"min {min} exceeds max {max}.", nameof(min));
        }

        var sketch = new MomentSketch();
        sketch.Restore(count, min, max, sum, 0, Math.Clamp(sum / count, min, max), 0, 0, 0, centralMomentsKnown: false, extremesExact);
        return sketch;
    }

    /// <summary>Merges another sketch into this one; the result is the sketch of both streams.</summary>
    public void Merge(MomentSketch other)
    {
        ArgumentNullException.ThrowIfNull(other);
        if (other.Count == 0)
        {
            return;
        }

        CentralMomentsKnown &= other.CentralMomentsKnown;
        ExtremesExact &= other.ExtremesExact;

        double otherSum = other._sum;
        double otherCompensation = other._sumCompensation;
        CombineWith(other.Count, other.Min, other.Max, other.Mean, other.M2, other.M3, other.M4);
        AddToSum(otherSum);
        AddToSum(otherCompensation);
    }

    /// <summary>Creates an independent copy.</summary>
    public MomentSketch Clone() => (MomentSketch)MemberwiseClone();

    /// <summary>Sets the whole state, as read back from storage; the caller has validated it.</summary>
    internal void Restore(long count, double min, double max, double sum, double compensation, double mean, double m2, double m3, double m4, bool centralMomentsKnown = true, bool extremesExact = true)
    {
        CentralMomentsKnown = centralMomentsKnown;
        ExtremesExact = extremesExact;
        Count = count;
        Min = count == 0 ? double.NaN : min;
        Max = count == 0 ? double.NaN : max;
        Mean = count == 0 ? double.NaN : mean;
        _sum = sum;
        _sumCompensation = compensation;
        M2 = m2;
        M3 = m3;
        M4 = m4;
    }

    internal double RawSum => _sum;

    internal double RawSumCompensation => _sumCompensation;

    // Pairwise update of Pébay (2008), eqs. 1.1–1.3 with p = 4; the moment sums are combined
    // before the mean moves so each formula sees the "a" side as it was.
    private void CombineWith(long nb, double minB, double maxB, double meanB, double m2B, double m3B, double m4B)
    {
        long na = Count;
        if (na == 0)
        {
            Count = nb;
            Min = minB;
            Max = maxB;
            Mean = meanB;
            M2 = m2B;
            M3 = m3B;
            M4 = m4B;
            return;
        }

        double a = na;
        double b = nb;
        double n = a + b;
        double delta = meanB - Mean;
        double deltaN = delta / n;
        double deltaN2 = deltaN * deltaN;
        double ab = a * b;
        double m2A = M2;
        double m3A = M3;

        M4 = M4 + m4B
            + (delta * deltaN2 * deltaN * ab * ((a * a) - ab + (b * b)))
            + (6.0 * deltaN2 * ((a * a * m2B) + (b * b * m2A)))
            + (4.0 * deltaN * ((a * m3B) - (b * m3A)));
        M3 = m3A + m3B
            + (delta * deltaN2 * ab * (a - b))
            + (3.0 * deltaN * ((a * m2B) - (b * m2A)));
        M2 = m2A + m2B + (delta * deltaN * ab);
        Mean += deltaN * b;
        Count = na + nb;
        Min = Math.Min(Min, minB);
        Max = Math.Max(Max, maxB);
        ForgetSpreadIfUnknown();
    }

    // Once some values are known only by their totals, the moment sums would describe part of the
    // values as if it were all of them: they stay 0, as stored sketches of unknown spread say.
    private void ForgetSpreadIfUnknown()
    {
        if (!CentralMomentsKnown)
        {
            M2 = M3 = M4 = 0;
        }
    }

    private void AddToSum(double value)
    {
        double t = _sum + value;
        _sumCompensation += Math.Abs(_sum) >= Math.Abs(value) ? (_sum - t) + value : (value - t) + _sum;
        _sum = t;
    }
}
