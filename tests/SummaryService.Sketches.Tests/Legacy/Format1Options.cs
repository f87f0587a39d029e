using SummaryService.Sketches.Summaries;

namespace SummaryService.Sketches.Tests.Legacy;

/// <summary>
/// The summary options the format-1 fixtures' answers were recorded with (see Data/Format1/README.md
/// in both test projects): quantiles 0, .01, .25, .5, .75, .9, .99, .999, 1; shares at or below −5,
/// 0, 1, 10, 100, 250; a 10-bin automatic histogram; at most 5 modes.
/// </summary>
internal static class Format1Options
{
    public static readonly SummaryOptions Recorded = new()
    {
        Quantiles = [0, 0.01, 0.25, 0.5, 0.75, 0.9, 0.99, 0.999, 1],
        RankOf = [-5, 0, 1, 10, 100, 250],
        Histogram = HistogramSpec.Automatic(10),
        MaxModes = 5,
    };
}
