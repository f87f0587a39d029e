namespace SummaryService.Sketches.Tests.MomentsTests;

/// <summary>
/// Reference moments by a two-pass computation in extended precision: the mean is carried as a
/// double-double (head + tail) and every power sum is Neumaier-compensated, so the result is
/// accurate to a few units in the last place of a double on a million values — far inside the
/// 1e-12 the sketch is held to, and independent of both the sketch and MathNet's one-pass
/// running moments.
/// </summary>
/// <remarks>
/// Two-pass (mean first, then sums of powers of deviations) is the textbook stable method; see
/// Chan, Golub &amp; LeVeque, "Algorithms for computing the sample variance" (1983). The
/// error-free transformations are Knuth's TwoSum and the fused multiply-add residual (common practice).
/// </remarks>
internal sealed record CompensatedMoments(long Count, double Mean, double M2, double M3, double M4)
{
    /// <summary>Sample variance M2/(n − 1).</summary>
    public double Variance => M2 / (Count - 1.0);

    /// <summary>Adjusted Fisher–Pearson skewness G1 (NIST/SEMATECH e-Handbook 1.3.5.11).</summary>
    public double Skewness
    {
        get
        {
            double n = Count;
            return Math.Sqrt(n * (n - 1)) / (n - 2) * (Math.Sqrt(n) * M3 / Math.Pow(M2, 1.5));
        }
    }

    /// <summary>
    /// Bias-corrected excess kurtosis G2 = (n−1)/((n−2)(n−3)) · ((n+1)·g2 + 6), g2 = n·M4/M2² − 3
    /// (Joanes &amp; Gill, "Comparing measures of sample skewness and kurtosis", 1998 — from memory).
    /// </summary>
    public double Kurtosis
    {
        get
        {
            double n = Count;
            double g2 = (n * M4 / (M2 * M2)) - 3;
            return (n - 1) / ((n - 2) * (n - 3)) * (((n + 1) * g2) + 6);
        }
    }

    public static CompensatedMoments Of(ReadOnlySpan<double> values)
    {
        var sum = default(CompensatedSum);
        foreach (double v in values)
        {
            sum.Add(v);
        }

        // Mean as head + tail: the head is the rounded quotient, the tail its exact residual.
        int n = values.Length;
        double total = sum.Value;
        double head = total / n;
        double tail = (Math.FusedMultiplyAdd(-head, n, sum.Head) + sum.Compensation) / n;

        var s2 = default(CompensatedSum);
        var s3 = default(CompensatedSum);
        var s4 = default(CompensatedSum);
        foreach (double v in values)
        {
            double d = (v - head) - tail;
            double d2 = d * d;
            s2.Add(d2);
            s3.Add(d2 * d);
            s4.Add(d2 * d2);
        }

        return new CompensatedMoments(n, head + tail, s2.Value, s3.Value, s4.Value);
    }

    /// <summary>Neumaier's improved Kahan summation.</summary>
    private struct CompensatedSum
    {
        public double Head;
        public double Compensation;

        public readonly double Value => Head + Compensation;

        public void Add(double x)
        {
            double t = Head + x;
            Compensation += Math.Abs(Head) >= Math.Abs(x) ? (Head - t) + x : (x - t) + Head;
            Head = t;
        }
    }
}
