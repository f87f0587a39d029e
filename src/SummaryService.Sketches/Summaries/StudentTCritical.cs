using MathNet.Numerics.Distributions;

namespace SummaryService.Sketches.Summaries;

/// <summary>
/// The two-sided critical value of Student's t: the t with P(|T_ν| ≤ t) = confidence, i.e. the
/// (1 + confidence)/2 quantile of the t distribution with ν degrees of freedom.
/// </summary>
/// <remarks>
/// <para>For ν below <see cref="ExpansionFrom"/> the quantile is found by root-finding on the
/// regularized incomplete beta function (MathNet.Numerics' <c>StudentT.InvCDF</c>), ~5–15 µs.</para>
/// <para>From there on, the Cornish–Fisher expansion of t in powers of 1/ν about the standard
/// normal quantile x (Abramowitz &amp; Stegun 26.7.5, four terms):
/// t = x + g₁/ν + g₂/ν² + g₃/ν³ + g₄/ν⁴ with g₁ = (x³ + x)/4, g₂ = (5x⁵ + 16x³ + 3x)/96,
/// g₃ = (3x⁷ + 19x⁵ + 17x³ − 15x)/384, g₄ = (79x⁹ + 776x⁷ + 1482x⁵ − 1920x³ − 945x)/92160.
/// Its relative error at ν ≥ 200 is below 10⁻⁹ for every confidence up to 0.9999 (checked against
/// MathNet in the tests), far inside the mean interval's own sampling error, and it costs one
/// normal quantile. At very large ν it tends to x as it should, where root-finding loses digits.</para>
/// </remarks>
internal static class StudentTCritical
{
    /// <summary>Degrees of freedom from which the expansion replaces root-finding.</summary>
    public const double ExpansionFrom = 200;

    /// <summary>
    /// Critical value for <paramref name="degreesOfFreedom"/> ν &gt; 0 at <paramref name="confidence"/> in (0, 1).
    /// </summary>
    public static double TwoSided(double degreesOfFreedom, double confidence)
    {
        double p = 1 - ((1 - confidence) / 2);
        if (degreesOfFreedom < ExpansionFrom)
        {
            return StudentT.InvCDF(0, 1, degreesOfFreedom, p);
        }

        double x = Normal.InvCDF(0, 1, p);
        double x2 = x * x;
        double g1 = ((x2 + 1) * x) / 4;
        double g2 = ((((5 * x2) + 16) * x2) + 3) * x / 96;
        double g3 = ((((((3 * x2) + 19) * x2) + 17) * x2) - 15) * x / 384;
        double g4 = ((((((((79 * x2) + 776) * x2) + 1482) * x2) - 1920) * x2) - 945) * x / 92160;
        double nu = degreesOfFreedom;
        return x + ((g1 + ((g2 + ((g3 + (g4 / nu)) / nu)) / nu)) / nu);
    }
}
