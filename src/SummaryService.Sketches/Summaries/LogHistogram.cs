using SummaryService.Sketches.Buckets;

namespace SummaryService.Sketches.Summaries;

/// <summary>
/// A histogram whose bins are the log buckets themselves, neighbours combined (the scale lowered,
/// exactly) until the bins spanning the data number at most the bins asked for. Counts are exact;
/// the edges are log-scaled: bin i of the positive range is [b^i, b^(i+1)) up to the last double,
/// in the half-open form of every histogram here (see <see cref="HistogramBin"/>).
/// </summary>
internal static class LogHistogram
{
    public static HistogramBin[] Of(LogBucketSketch sketch, int maxBins, double min, double max)
    {
        LogBucketSketch folded = sketch.Clone();
        while (BinsNeeded(folded) > maxBins && folded.Scale > ExponentialMapping.MinScale)
        {
            folded.DownscaleTo(folded.Scale - 1);
        }

        ExponentialMapping mapping = folded.Mapping;
        var bins = new List<HistogramBin>();
        if (Span(folded.NegativeBuckets()) is (int negLow, int negHigh))
        {
            for (int i = negHigh; i >= negLow; i--)
            {
                // Magnitudes in (F(i), F(i+1)] are the values in [−F(i+1), −F(i)).
                bins.Add(Exact(-mapping.Floor(i + 1L), -mapping.Floor(i), folded.NegativeCount(i)));
            }
        }

        if (folded.ZeroCount > 0)
        {
            bins.Add(Exact(0, double.Epsilon, folded.ZeroCount));
        }

        if (Span(folded.PositiveBuckets()) is (int posLow, int posHigh))
        {
            for (int i = posLow; i <= posHigh; i++)
            {
                // Values in (F(i), F(i+1)] are the doubles in [next above F(i), next above F(i+1)).
                bins.Add(Exact(Math.BitIncrement(mapping.Floor(i)), Math.BitIncrement(mapping.Floor(i + 1L)), folded.PositiveCount(i)));
            }
        }

        // The outer edges are the exact extremes; the last bin holds its upper edge, as in every histogram.
        bins[0] = bins[0] with { Lower = min };
        bins[^1] = bins[^1] with { Upper = max };
        return [.. bins];
    }

    private static HistogramBin Exact(double lower, double upper, long count) =>
        new(lower, upper, count, count, count) { LowSource = BoundSource.LogBuckets, HighSource = BoundSource.LogBuckets };

    private static int BinsNeeded(LogBucketSketch sketch) =>
        Width(Span(sketch.NegativeBuckets())) + Width(Span(sketch.PositiveBuckets())) + (sketch.ZeroCount > 0 ? 1 : 0);

    private static int Width((int Low, int High)? span) => span is (int low, int high) ? high - low + 1 : 0;

    private static (int Low, int High)? Span(IEnumerable<(int Index, long Count)> buckets)
    {
        (int Low, int High)? span = null;
        foreach ((int index, _) in buckets)
        {
            span = span is (int low, _) ? (low, index) : (index, index);
        }

        return span;
    }
}
