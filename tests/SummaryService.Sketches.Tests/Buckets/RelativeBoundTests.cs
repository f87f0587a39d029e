using MathNet.Numerics.Distributions;
using SummaryService.Sketches.Summaries;
using SummaryService.Sketches.Tests.Support;

namespace SummaryService.Sketches.Tests.Buckets;

/// <summary>
/// The log buckets' quantile intervals against the exact sample quantiles (Hyndman &amp; Fan
/// definition 7 as MathNet.Numerics computes it, <c>QuantileDefinition.R7</c>): read from the compact
/// form, which has no KLL part, the interval is certain — the truth is inside every time — and no
/// wider than the relative bound (base − 1)/(base + 1) the summary states for the scale in force.
/// </summary>
public class RelativeBoundTests
{
    private static readonly double[] Probabilities =
        [0, 0.001, 0.01, 0.05, 0.1, 0.25, 0.5, 0.6, 0.75, 0.8, 0.9, 0.95, 0.99, 0.995, 0.999, 0.9999, 1];

    public static TheoryData<string> Datasets =>
    [
        "lognormal", "pareto", "exponential", "uniform", "mixture", "negatives", "zeros",
        "twelve decades", "tiny", "huge", "subnormal",
    ];

    [Theory]
    [MemberData(nameof(Datasets))]
    public void The_truth_is_inside_every_interval_and_no_interval_is_wider_than_its_bound(string dataset)
    {
        double[] values = Dataset(dataset, n: 20_000, seed: 7);
        SeriesSketch sketch = Compact(values, new SeriesSketchOptions());

        AssertCertainAndWithinBound(values, sketch, dataset);
    }

    [Theory]
    [MemberData(nameof(Datasets))]
    public void Arbitrary_merge_trees_of_sketches_at_different_scales_keep_the_bound(string dataset)
    {
        double[] values = Dataset(dataset, n: 20_000, seed: 8);
        var rng = new Random(9);
        int[] scales = [8, 6, 5, 7, 3];

        // Random pieces, each sketched at its own starting scale, merged pairwise in random order.
        var pieces = new List<SeriesSketch>();
        int start = 0;
        while (start < values.Length)
        {
            int length = Math.Min(values.Length - start, rng.Next(1, 3000));
            var piece = new SeriesSketch(new SeriesSketchOptions { LogScale = scales[rng.Next(scales.Length)] }, seed: (ulong)start + 1);
            piece.Add(values.AsSpan(start, length));
            pieces.Add(piece);
            start += length;
        }

        while (pieces.Count > 1)
        {
            int a = rng.Next(pieces.Count);
            SeriesSketch into = pieces[a];
            pieces.RemoveAt(a);
            int b = rng.Next(pieces.Count);
            into.Merge(pieces[b]);
            pieces[b] = into;
        }

        SeriesSketch merged = pieces[0];
        merged.Compact();
        Assert.Equal(values.Length, merged.Count);
        AssertCertainAndWithinBound(values, merged, dataset);
    }

    [Fact]
    public void Every_scale_drop_keeps_the_truth_inside_and_states_the_wider_bound()
    {
        // Twelve decades (39.9 octaves) need 10,200 buckets at scale 8: limits from 16384 down to 8
        // leave scale 8 and then force every drop to −3, and the bound stated must be the one of the
        // scale reached.
        double[] values = Dataset("twelve decades", n: 20_000, seed: 10);
        var seen = new HashSet<int>();
        foreach (int maxBuckets in new[] { 16384, 8192, 4096, 2048, 1024, 512, 256, 128, 64, 32, 16, 8 })
        {
            SeriesSketch sketch = Compact(values, new SeriesSketchOptions { LogScale = 8, LogMaxBuckets = maxBuckets });
            Summary summary = AssertCertainAndWithinBound(values, sketch, $"max buckets {maxBuckets}");
            int scale = summary.BucketScale!.Value;
            seen.Add(scale);

            // Data model, "Exponential Scale": base = 2^(2^−scale); the stated bound is (base − 1)/(base + 1).
            double b = Math.Pow(2, Math.Pow(2, -scale));
            Assert.Equal((b - 1) / (b + 1), summary.RelativeError!.Value, 12);
        }

        Assert.Equal(Enumerable.Range(-3, 12).ToHashSet(), seen);
    }

    [Fact]
    public void At_the_default_scale_the_bound_is_below_one_percent_for_every_q_from_the_median_to_the_999th()
    {
        // Issue target: half-width at most the configured relative bound (≤ 1%) at q in [0.5, 0.999].
        double[] values = Dataset("lognormal", n: 200_000, seed: 11);
        SeriesSketch sketch = Compact(values, new SeriesSketchOptions());
        var reference = new ExactReference(values);
        double[] qs = Enumerable.Range(0, 500).Select(i => 0.5 + (i * 0.499 / 499)).ToArray();
        Summary summary = sketch.Summarize(new SummaryOptions { Quantiles = qs });

        Assert.Equal(6, summary.BucketScale);
        Assert.True(summary.RelativeError < 0.0055);
        foreach (QuantileEstimate e in summary.Quantiles)
        {
            double truth = reference.Quantile(e.Q);
            Assert.InRange(truth, e.Low, e.High);
            Assert.True((e.High - e.Low) / 2 <= 0.01 * e.Value, $"q = {e.Q}: half-width {(e.High - e.Low) / 2} is over 1% of {e.Value}");
        }
    }

    internal static SeriesSketch Compact(double[] values, SeriesSketchOptions options)
    {
        var sketch = new SeriesSketch(options, seed: 1);
        for (int start = 0; start < values.Length; start += 1000)
        {
            sketch.Add(values.AsSpan(start, Math.Min(1000, values.Length - start)));
        }

        sketch.Compact();
        Assert.Null(sketch.Quantiles);
        return sketch;
    }

    // Certain: the exact quantile (MathNet R7) lies in every interval. Tight: for an interval within
    // one sign, its half-width is at most the stated bound times its middle (plus the one-ulp
    // widening each end gets against rounding).
    private static Summary AssertCertainAndWithinBound(double[] values, SeriesSketch sketch, string label)
    {
        var reference = new ExactReference(values);
        Summary summary = sketch.Summarize(new SummaryOptions { Quantiles = Probabilities });
        Assert.Equal(SketchForm.LogBuckets, summary.Form);
        double bound = summary.RelativeError!.Value;
        foreach (QuantileEstimate e in summary.Quantiles)
        {
            double truth = reference.Quantile(e.Q);
            Assert.True(e.Low <= truth && truth <= e.High, $"{label}: q = {e.Q}: true {truth:R} outside [{e.Low:R}, {e.High:R}]");
            Assert.InRange(e.Value, e.Low, e.High);
            if (e.Low > 0 || e.High < 0)
            {
                double middle = Math.Abs(e.Low + ((e.High - e.Low) / 2));
                double allowance = (bound * middle * (1 + 1e-12)) + (4 * Math.BitIncrement(Math.Max(Math.Abs(e.Low), Math.Abs(e.High))) - (4 * Math.Max(Math.Abs(e.Low), Math.Abs(e.High))));
                Assert.True((e.High - e.Low) / 2 <= allowance, $"{label}: q = {e.Q}: half-width {(e.High - e.Low) / 2:R} over {bound:P3} of {middle:R}");
            }
        }

        return summary;
    }

    internal static double[] Dataset(string name, int n, int seed)
    {
        var rng = new Random(seed);
        return name switch
        {
            "lognormal" => TestData.LogNormal(n, seed, mu: 4, sigma: 1),
            "pareto" => Enumerable.Range(0, n).Select(_ => Pareto.Sample(rng, 1, 1.2)).ToArray(),
            "exponential" => Enumerable.Range(0, n).Select(_ => Exponential.Sample(rng, 0.01)).ToArray(),
            "uniform" => Enumerable.Range(0, n).Select(_ => ContinuousUniform.Sample(rng, 100, 200)).ToArray(),
            "mixture" => Enumerable.Range(0, n).Select(_ => rng.NextDouble() < 0.7 ? LogNormal.Sample(rng, Math.Log(6), 0.3) : LogNormal.Sample(rng, Math.Log(60), 0.3)).ToArray(),
            "negatives" => Enumerable.Range(0, n).Select(_ => Normal.Sample(rng, -20, 40)).ToArray(),
            "zeros" => Enumerable.Range(0, n).Select(_ => rng.NextDouble() < 0.3 ? 0.0 : Exponential.Sample(rng, 1)).ToArray(),
            "twelve decades" => Enumerable.Range(0, n).Select(_ => Math.Pow(10, (rng.NextDouble() * 12) - 6)).ToArray(),
            "tiny" => Enumerable.Range(0, n).Select(_ => 1e-300 * LogNormal.Sample(rng, 0, 2)).ToArray(),
            "huge" => Enumerable.Range(0, n).Select(_ => 1e300 * LogNormal.Sample(rng, 0, 2)).Select(v => Math.Min(v, double.MaxValue)).ToArray(),
            "subnormal" => Enumerable.Range(0, n).Select(_ => BitConverter.Int64BitsToDouble(rng.NextInt64(1, 1L << 52)) * (rng.NextDouble() < 0.5 ? -1 : 1)).ToArray(),
            _ => throw new ArgumentOutOfRangeException(nameof(name), name, "unknown data set"),
        };
    }
}
