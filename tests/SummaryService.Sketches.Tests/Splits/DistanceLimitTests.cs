using SummaryService.Sketches.Summaries;

namespace SummaryService.Sketches.Tests.Splits;

/// <summary>The distance two samples of one distribution stay within, against the two-sample Kolmogorov–Smirnov critical values.</summary>
public class DistanceLimitTests
{
    [Theory]
    [InlineData(0.95, 1.358)]
    [InlineData(0.99, 1.628)]
    [InlineData(0.999, 1.949)]
    public void The_limit_is_never_below_the_asymptotic_critical_value_and_stays_within_a_small_factor_of_it(double confidence, double c)
    {
        // Large-sample two-sample critical values D_crit = c(α)·sqrt((n + m)/(n·m)) with
        // c(α) = 1.358, 1.628, 1.949 at α = 0.05, 0.01, 0.001 (Smirnov's limiting distribution as
        // tabulated with the two-sample test; c(α) = sqrt(−ln(α/2)/2); from memory). The limit comes from the DKW
        // inequality, which is distribution-free at every sample size, so it may only be wider.
        foreach (var (n, m) in new[] { (1000L, 1000L), (4000L, 200_000L), (50L, 20_000L), (100_000L, 100_000L) })
        {
            double critical = c * Math.Sqrt((n + m) / (double)(n * m));
            double limit = SketchComparison.SameDistributionLimit(n, m, confidence);
            Assert.InRange(limit, critical, 1.6 * critical);
        }
    }
}
