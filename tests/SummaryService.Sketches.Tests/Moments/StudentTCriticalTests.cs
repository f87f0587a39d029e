using MathNet.Numerics.Distributions;
using SummaryService.Sketches.Summaries;

namespace SummaryService.Sketches.Tests.MomentsTests;

/// <summary>
/// The mean interval's critical value: root-finding below 200 degrees of freedom, the four-term
/// Cornish–Fisher expansion (Abramowitz &amp; Stegun 26.7.5) from there on.
/// </summary>
public class StudentTCriticalTests
{
    public static TheoryData<double, double> ExpansionRange()
    {
        var data = new TheoryData<double, double>();
        foreach (double confidence in new[] { 0.5, 0.8, 0.9, 0.95, 0.99, 0.999, 0.9999 })
        {
            foreach (double nu in new[] { StudentTCritical.ExpansionFrom, 201, 350, 1_000, 9_999, 100_000 })
            {
                data.Add(nu, confidence);
            }
        }

        return data;
    }

    [Theory]
    [MemberData(nameof(ExpansionRange))]
    public void The_expansion_agrees_with_root_finding_to_nine_digits(double nu, double confidence)
    {
        // MathNet.Numerics' StudentT.InvCDF is the reference quantile.
        double reference = StudentT.InvCDF(0, 1, nu, 1 - ((1 - confidence) / 2));

        Tolerance.SignificantDigits(reference, StudentTCritical.TwoSided(nu, confidence), 9, $"t at ν = {nu}, {confidence}");
    }

    [Theory]
    [InlineData(1, 0.95)]
    [InlineData(9, 0.99)]
    [InlineData(199.5, 0.999)]
    public void Below_the_switch_it_is_the_root_found_quantile(double nu, double confidence)
    {
        // MathNet.Numerics' StudentT.InvCDF is the reference quantile.
        Assert.Equal(StudentT.InvCDF(0, 1, nu, 1 - ((1 - confidence) / 2)), StudentTCritical.TwoSided(nu, confidence));
    }

    [Theory]
    [InlineData(0.80, 1.282)] // upper 10% point
    [InlineData(0.90, 1.645)] // upper 5% point
    [InlineData(0.95, 1.960)] // upper 2.5% point
    [InlineData(0.98, 2.326)] // upper 1% point
    [InlineData(0.99, 2.576)] // upper 0.5% point
    [InlineData(0.998, 3.090)] // upper 0.1% point
    public void With_unlimited_degrees_of_freedom_it_is_the_normal_critical_value(double confidence, double tabulated)
    {
        // The ∞ row of the t table, NIST/SEMATECH e-Handbook 1.3.6.7.2 (three decimals; values from memory).
        Assert.InRange(StudentTCritical.TwoSided(1e12, confidence), tabulated - 5e-4, tabulated + 5e-4);
    }

    [Fact]
    public void It_falls_steadily_towards_the_normal_value_across_the_switch()
    {
        double previous = double.PositiveInfinity;
        foreach (double nu in new[] { 150, 199, 199.9, 200, 200.1, 250, 1e3, 1e5, 1e8 })
        {
            double t = StudentTCritical.TwoSided(nu, 0.99);
            Assert.True(t < previous, $"t at ν = {nu} is {t:R}, not below {previous:R}");
            previous = t;
        }

        Assert.True(previous > Normal.InvCDF(0, 1, 0.995), "t stays above the normal quantile"); // MathNet.Numerics reference
    }
}
