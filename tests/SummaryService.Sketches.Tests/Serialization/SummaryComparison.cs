using SummaryService.Sketches.Modes;
using SummaryService.Sketches.Summaries;

namespace SummaryService.Sketches.Tests.SerializationTests;

/// <summary>
/// Compares two summaries figure by figure. The record's own equality compares its lists by
/// reference, so the lists are compared element by element (record structs, by value) and the
/// rest of the record with the lists swapped for one shared empty instance.
/// </summary>
internal static class SummaryComparison
{
    /// <summary>Options that exercise every optional part: explicit quantiles, a histogram and rank queries.</summary>
    public static readonly SummaryOptions Options = new()
    {
        Quantiles = [0, 0.01, 0.1, 0.25, 0.5, 0.75, 0.9, 0.99, 1],
        Histogram = HistogramSpec.Automatic(12),
        RankOf = [-1.0, 0.0, 0.5, 3.0, 10.0, 1000.0],
        MaxModes = 20,
    };

    private static readonly QuantileEstimate[] s_noQuantiles = [];
    private static readonly RankEstimate[] s_noRanks = [];
    private static readonly ModeEstimate[] s_noModes = [];

    public static void AssertEqual(Summary expected, Summary actual)
    {
        Assert.Equal(expected.Quantiles, actual.Quantiles);
        Assert.Equal(expected.Ranks, actual.Ranks);
        Assert.Equal(expected.Modes, actual.Modes);
        Assert.Equal(expected.Histogram is null, actual.Histogram is null);
        if (expected.Histogram is not null)
        {
            Assert.Equal(expected.Histogram, actual.Histogram!);
        }

        Assert.Equal(WithoutLists(expected), WithoutLists(actual));
    }

    private static Summary WithoutLists(Summary s) =>
        s with { Quantiles = s_noQuantiles, Ranks = s_noRanks, Modes = s_noModes, Histogram = null };
}
