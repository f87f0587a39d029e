using SummaryService.Sketches.Moments;

namespace SummaryService.Sketches.Tests.MomentsTests;

/// <summary>Bit-for-bit comparison of two moment sketches' states.</summary>
internal static class MomentStates
{
    /// <summary>Count, extremes, mean, the central moment sums and the sum are the same doubles.</summary>
    public static void AssertIdentical(MomentSketch expected, MomentSketch actual)
    {
        Assert.Equal(expected.Count, actual.Count);
        Assert.Equal(expected.Min, actual.Min);
        Assert.Equal(expected.Max, actual.Max);
        Assert.Equal(expected.Mean, actual.Mean);
        Assert.Equal(expected.M2, actual.M2);
        Assert.Equal(expected.M3, actual.M3);
        Assert.Equal(expected.M4, actual.M4);
        Assert.Equal(expected.Sum, actual.Sum);
    }
}
