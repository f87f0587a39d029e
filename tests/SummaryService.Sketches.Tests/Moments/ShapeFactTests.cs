using SummaryService.Sketches.Summaries;

namespace SummaryService.Sketches.Tests.MomentsTests;

/// <summary>
/// Large seeded samples show the textbook shapes of their distributions (NIST/SEMATECH
/// e-Handbook of Statistical Methods, 1.3.5.11 and the distribution pages of 1.3.6.6; section
/// numbers from memory): skewness and excess kurtosis of normal (0, 0), exponential (2, 6),
/// uniform (0, −1.2) and double exponential / Laplace (0, 3).
/// </summary>
/// <remarks>
/// Tolerances are five asymptotic standard errors at n = 10⁶. The standard errors come from the
/// delta method: Var(G1) ≈ E[IF²]/n with the influence function of μ3/σ³, and likewise for μ4/σ⁴,
/// which needs the central moments up to order 8 (normal: (k−1)!!; exponential: the subfactorials
/// 1, 2, 9, 44, 265, 1854, 14833; Laplace with b = 1: k!; uniform on (−1, 1): 1/(k+1)). They give
/// for skewness / kurtosis: normal 0.0024 / 0.0049, exponential 0.0085 / 0.090,
/// Laplace 0.0079 / 0.034, uniform 0.0014 / 0.0011. The exponential and Laplace kurtosis bounds
/// are wide because their eighth moments are large; at five standard errors a correct sketch fails
/// with probability below 1e-6 for any seed, while a wrong definition (kurtosis without the −3,
/// or a skewness of the wrong sign convention) is off by far more.
/// </remarks>
public class ShapeFactTests
{
    [Theory]
    [InlineData(Family.Normal, 0.0, 0.0123, 0.0, 0.0245)]
    [InlineData(Family.Exponential, 2.0, 0.0424, 6.0, 0.449)]
    [InlineData(Family.Uniform, 0.0, 0.0072, -1.2, 0.0057)]
    [InlineData(Family.Laplace, 0.0, 0.0397, 3.0, 0.172)]
    public void Million_value_sample_has_its_distributions_skewness_and_excess_kurtosis(
        Family family, double skewness, double skewnessTolerance, double kurtosis, double kurtosisTolerance)
    {
        Summary s = SeededSamples.ChunkedSummary(family);

        Assert.InRange(s.Skewness!.Value, skewness - skewnessTolerance, skewness + skewnessTolerance);
        Assert.InRange(s.Kurtosis!.Value, kurtosis - kurtosisTolerance, kurtosis + kurtosisTolerance);
    }

    [Theory]
    [InlineData(Family.Exponential)]
    [InlineData(Family.LogNormal)]
    public void Right_skewed_data_has_its_mean_above_its_median(Family family)
    {
        // Common practice; for the exponential the mean is 1/λ and the median ln 2/λ. Even the
        // upper end of the median's interval lies below the mean.
        Summary s = SeededSamples.ChunkedSummary(family);

        Assert.True(s.Skewness > 0);
        Assert.True(s.Mean > s.FiveNumber!.Value.Median.High, $"mean {s.Mean} vs median {s.FiveNumber.Value.Median.Value}");
    }

    [Fact]
    public void Left_skewed_data_has_its_mean_below_its_median()
    {
        // The mirror image of the exponential sample (common practice).
        double[] mirrored = SeededSamples.Values(Family.Exponential).AsSpan(0, 100_000).ToArray().Select(v => -v).ToArray();
        Summary s = SeededSamples.FedInChunks(mirrored).Summarize();

        Assert.True(s.Skewness < 0);
        Assert.True(s.Mean < s.FiveNumber!.Value.Median.Low, $"mean {s.Mean} vs median {s.FiveNumber.Value.Median.Value}");
    }

    [Fact]
    public void Exponential_sample_mean_and_sd_both_estimate_one_over_the_rate()
    {
        // Exponential with rate λ = 0.5: mean = sd = 1/λ = 2 (NIST/SEMATECH e-Handbook 1.3.6.6.7,
        // from memory). Standard error of the mean 2/√n = 0.002 and of the sd about
        // σ·√((κ−1)/(4n)) = 2·√(8/4e6) ≈ 0.0028 (κ = 9, delta method); five of each.
        Summary s = SeededSamples.ChunkedSummary(Family.Exponential);

        Assert.InRange(s.Mean!.Value, 2 - 0.01, 2 + 0.01);
        Assert.InRange(s.StandardDeviation!.Value, 2 - 0.014, 2 + 0.014);
    }
}
