namespace SummaryService.Sketches.Tests.MomentsTests;

/// <summary>Closeness checks shared by the moment tests.</summary>
internal static class Tolerance
{
    /// <summary>
    /// Asserts |actual − expected| ≤ tolerance · max(1, |expected|): relative error for figures of
    /// magnitude one or more, absolute error below that. Figures near zero, such as the skewness of
    /// symmetric data, have no meaningful relative error, so they are held to the absolute bound
    /// (common practice).
    /// </summary>
    public static void Close(double expected, double? actual, double tolerance, string figure)
    {
        Assert.True(actual.HasValue, $"{figure} is missing.");
        double error = Math.Abs(actual!.Value - expected);
        double bound = tolerance * Math.Max(1.0, Math.Abs(expected));
        Assert.True(error <= bound, $"{figure}: expected {expected:R}, got {actual.Value:R}; error {error:E3} exceeds {bound:E3}.");
    }

    /// <summary>
    /// Asserts that <paramref name="actual"/> agrees with <paramref name="expected"/> to at least
    /// <paramref name="digits"/> significant digits, measured as the log relative error
    /// LRE = −log10(|actual − expected| / |expected|) that NIST StRD uses to grade results.
    /// </summary>
    public static void SignificantDigits(double expected, double? actual, double digits, string figure)
    {
        Assert.True(actual.HasValue, $"{figure} is missing.");
        double relative = Math.Abs(actual!.Value - expected) / Math.Abs(expected);
        double lre = relative == 0 ? double.PositiveInfinity : -Math.Log10(relative);
        Assert.True(lre >= digits, $"{figure}: expected {expected:R}, got {actual.Value:R}; {lre:F2} significant digits, fewer than {digits}.");
    }
}
