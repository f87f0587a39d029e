namespace SummaryService.Sketches.Moments;

/// <summary>
/// The figures derived from the moment sums, each defined once here (summaries read them from
/// here), with the conventions of a numerics library's moments accumulator: sample figures with
/// their bias corrections beside the population ones. A figure that is undefined for the data is
/// null, never 0 or NaN, so a caller cannot mistake "no spread measured" for "no spread". Values
/// that arrived as totals only (<see cref="CentralMomentsKnown"/> false, e.g. an OpenTelemetry
/// histogram point's count and sum) leave every spread and shape figure undefined.
/// </summary>
/// <remarks>
/// n is <see cref="Count"/>, M2, M3, M4 the central moment sums. Definitions: NIST/SEMATECH
/// e-Handbook of Statistical Methods 1.3.5.11 (skewness and kurtosis), Joanes &amp; Gill,
/// "Comparing measures of sample skewness and kurtosis", The Statistician 47 (1998): g1, g2 are
/// their type 1, G1, G2 their type 2 (the sample figures of common statistics packages).
/// </remarks>
public sealed partial class MomentSketch
{
    /// <summary>
    /// Sample variance s² = M2 / (n − 1): Bessel's normalizer n − 1 makes it unbiased for the variance
    /// of the population the values were drawn from. Undefined for fewer than two values.
    /// </summary>
    public double? Variance => Count >= 2 && CentralMomentsKnown ? M2 / (Count - 1) : null;

    /// <summary>
    /// Population variance σ² = M2 / n, the variance of exactly these values (normalizer n; biased
    /// low as an estimate for a larger population). 0 for one value; undefined for none.
    /// </summary>
    public double? PopulationVariance => Count >= 1 && CentralMomentsKnown ? M2 / Count : null;

    /// <summary>Sample standard deviation s = √(M2 / (n − 1)). Undefined for fewer than two values.</summary>
    public double? StandardDeviation => Variance is { } v ? Math.Sqrt(v) : null;

    /// <summary>Population standard deviation σ = √(M2 / n). 0 for one value; undefined for none.</summary>
    public double? PopulationStandardDeviation => PopulationVariance is { } v ? Math.Sqrt(v) : null;

    /// <summary>
    /// Adjusted Fisher–Pearson skewness G1 = √(n(n − 1)) / (n − 2) · g1, the sample skewness with
    /// its small-sample correction. Undefined for fewer than three values or when every value is
    /// equal (M2 = 0: no spread to be skewed).
    /// </summary>
    public double? Skewness => Count >= 3 && PopulationSkewness is { } g1
        ? Math.Sqrt((double)Count * (Count - 1)) / (Count - 2) * g1
        : null;

    /// <summary>
    /// Population skewness g1 = √n · M3 / M2^1.5 (the third standardized moment, normalizer n).
    /// Undefined for no values or when every value is equal (M2 = 0).
    /// </summary>
    public double? PopulationSkewness => Count >= 1 && CentralMomentsKnown && M2 > 0 ? Math.Sqrt(Count) * M3 / Math.Pow(M2, 1.5) : null;

    /// <summary>
    /// Bias-corrected excess kurtosis G2 = (n − 1) / ((n − 2)(n − 3)) · ((n + 1) · g2 + 6), the sample
    /// figure (0 for a normal population; the "excess" is over the normal's kurtosis of 3).
    /// Undefined for fewer than four values or when every value is equal (M2 = 0).
    /// </summary>
    public double? ExcessKurtosis
    {
        get
        {
            if (Count < 4 || PopulationExcessKurtosis is not { } g2)
            {
                return null;
            }

            double n = Count;
            return (n - 1) / ((n - 2) * (n - 3)) * (((n + 1) * g2) + 6);
        }
    }

    /// <summary>
    /// Population excess kurtosis g2 = n · M4 / M2² − 3 (the fourth standardized moment, normalizer
    /// n, less the normal's 3). Undefined for no values or when every value is equal (M2 = 0).
    /// </summary>
    public double? PopulationExcessKurtosis => Count >= 1 && CentralMomentsKnown && M2 > 0 ? ((double)Count * M4 / (M2 * M2)) - 3 : null;

    /// <summary>
    /// A new sketch of both streams, leaving <paramref name="a"/> and <paramref name="b"/> as they
    /// were: the pairwise combination of Chan, Golub &amp; LeVeque (1979) and Pébay (2008), exact up
    /// to rounding whatever the order and grouping of combinations.
    /// </summary>
    public static MomentSketch Combine(MomentSketch a, MomentSketch b)
    {
        ArgumentNullException.ThrowIfNull(a);
        ArgumentNullException.ThrowIfNull(b);
        MomentSketch combined = a.Clone();
        combined.Merge(b);
        return combined;
    }
}
