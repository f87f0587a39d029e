using SummaryService.Sketches.Summaries;
using SummaryService.Sketches.Tests.Support;

namespace SummaryService.Sketches.Tests.Splits;

/// <summary>
/// The Kolmogorov–Smirnov distance walks both sides' points once in ascending order (and the log
/// buckets of both signs in value order, at the coarser side's scale): on exact sketches it is the
/// two-sample statistic itself, whatever the signs, zeros, ties and scales of the two sides.
/// </summary>
public class DistanceWalkTests
{
    [Theory]
    [InlineData(6, 6)]
    [InlineData(6, 3)]
    [InlineData(2, 8)]
    public void On_exact_sketches_the_distance_is_the_two_sample_statistic(int scaleA, int scaleB)
    {
        var random = new Random(scaleA * 10 + scaleB);

        // Mixed signs, zeros and repeated values, at most 200 a side, so both KLL parts are exact.
        double[] a = [.. Enumerable.Range(0, 180).Select(_ => Math.Round((random.NextDouble() - 0.4) * 50, 1)), 0, 0, -3.5, -3.5];
        double[] b = [.. Enumerable.Range(0, 150).Select(_ => Math.Round((random.NextDouble() - 0.3) * 40, 1)), 0, 7.25, 7.25];
        SeriesSketch sa = Sketch(a, scaleA);
        SeriesSketch sb = Sketch(b, scaleB);

        (double distance, double low, double high) = SketchComparison.KolmogorovSmirnov(sa, sb, 0.99);

        // The two-sample statistic by its definition, sup over x of |F_a(x) − F_b(x)|, the supremum
        // taken over the pooled sample points (common practice).
        var ra = new ExactReference(a);
        var rb = new ExactReference(b);
        double exact = a.Concat(b).Max(x => Math.Abs((ra.CountAtOrBelow(x) / (double)a.Length) - (rb.CountAtOrBelow(x) / (double)b.Length)));
        Assert.Equal(exact, distance, 1e-12);
        Assert.InRange(exact, low - 1e-12, high + 1e-12);
    }

    private static SeriesSketch Sketch(double[] values, int scale)
    {
        var sketch = new SeriesSketch(new SeriesSketchOptions { LogScale = scale }, seed: 3);
        sketch.Add(values);
        return sketch;
    }
}
