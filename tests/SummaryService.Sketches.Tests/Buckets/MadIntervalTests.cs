using SummaryService.Sketches.Summaries;
using SummaryService.Sketches.Tests.Support;

namespace SummaryService.Sketches.Tests.Buckets;

/// <summary>
/// The MAD's interval read from the log buckets alone (the compact form) is certain: the exact
/// median absolute deviation (definition-7 medians as MathNet.Numerics computes them) lies inside
/// it every time, on every data shape, and it stays a few buckets wide.
/// </summary>
public class MadIntervalTests
{
    [Theory]
    [MemberData(nameof(RelativeBoundTests.Datasets), MemberType = typeof(RelativeBoundTests))]
    public void The_exact_mad_is_inside_the_interval_of_the_log_buckets(string dataset)
    {
        foreach (int n in new[] { 2_000, 20_001 })
        {
            double[] values = RelativeBoundTests.Dataset(dataset, n, seed: 11);
            SeriesSketch sketch = RelativeBoundTests.Compact(values, new SeriesSketchOptions());
            double truth = new ExactReference(values).Mad();

            Summary summary = sketch.Summarize();

            Assert.True(summary.MadLow <= truth && truth <= summary.MadHigh, $"{dataset}, n = {n}: MAD {truth:R} outside [{summary.MadLow:R}, {summary.MadHigh:R}]");
            Assert.InRange(summary.Mad!.Value, summary.MadLow!.Value, summary.MadHigh!.Value);
            Assert.Equal(BoundSource.LogBuckets, summary.MadLowSource);
        }
    }

    [Fact]
    public void On_latencies_the_interval_is_a_few_buckets_wide()
    {
        double[] values = RelativeBoundTests.Dataset("lognormal", 20_000, seed: 12);
        Summary summary = RelativeBoundTests.Compact(values, new SeriesSketchOptions()).Summarize();

        // The median is known to ±0.54% and each deviation to ±0.54% of its own value (scale 6),
        // so with the median about twice the MAD the interval's half-width stays within ~2%.
        double halfWidth = (summary.MadHigh!.Value - summary.MadLow!.Value) / 2;
        Assert.True(halfWidth <= 0.02 * summary.Mad!.Value, $"half-width {halfWidth:R} of MAD {summary.Mad:R}");
    }
}
