using MathNet.Numerics.Distributions;
using SummaryService.Sketches.Moments;

namespace SummaryService.Sketches.Summaries;

/// <summary>
/// How far side b's mean lies from side a's, with Welch's t-interval (Welch 1947): the two sides
/// may have different variances, as a slow host and the rest of a fleet do. The interval is
/// b̄ − ā ± t(1 − δ/2, ν)·se with se = sqrt(s_a²/n_a + s_b²/n_b) and the Welch–Satterthwaite
/// degrees of freedom ν = se⁴ / ((s_a²/n_a)²/(n_a − 1) + (s_b²/n_b)²/(n_b − 1)); t from
/// MathNet.Numerics. Moments are exact in every sketch form, so this interval carries sampling
/// error only. Like every t-interval it assumes the means are near normal, which long-tailed data
/// reach only with many values; the quantile shifts and the Kolmogorov–Smirnov verdict need no
/// such assumption.
/// </summary>
/// <param name="A">Mean of side a.</param>
/// <param name="B">Mean of side b.</param>
/// <param name="Low">Lower end of the interval for the difference of the population means.</param>
/// <param name="High">Upper end.</param>
/// <param name="DegreesOfFreedom">ν, the Welch–Satterthwaite degrees of freedom (infinite when both variances are 0).</param>
public readonly record struct MeanDifference(double A, double B, double Low, double High, double DegreesOfFreedom)
{
    /// <summary>b̄ − ā.</summary>
    public double Delta => B - A;

    /// <summary>True when the interval leaves out 0.</summary>
    public bool Significant => Low > 0 || High < 0;

    /// <summary>The difference b − a, or null when a side has fewer than two values (no variance to judge by).</summary>
    public static MeanDifference? Welch(MomentSketch a, MomentSketch b, double confidence)
    {
        ArgumentNullException.ThrowIfNull(a);
        ArgumentNullException.ThrowIfNull(b);
        Confidence.Require(confidence);
        if (a.Count < 2 || b.Count < 2)
        {
            return null;
        }

        double va = a.M2 / (a.Count - 1) / a.Count;
        double vb = b.M2 / (b.Count - 1) / b.Count;
        double se = Math.Sqrt(va + vb);
        double delta = b.Mean - a.Mean;
        if (se == 0)
        {
            return new MeanDifference(a.Mean, b.Mean, delta, delta, double.PositiveInfinity);
        }

        double nu = (va + vb) * (va + vb) / ((va * va / (a.Count - 1)) + (vb * vb / (b.Count - 1)));
        double t = StudentT.InvCDF(0, 1, nu, 1 - ((1 - confidence) / 2));
        return new MeanDifference(a.Mean, b.Mean, delta - (t * se), delta + (t * se), nu);
    }
}
