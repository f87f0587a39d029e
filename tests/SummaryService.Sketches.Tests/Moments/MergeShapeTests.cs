using MathNet.Numerics.Distributions;
using SummaryService.Sketches.Moments;

namespace SummaryService.Sketches.Tests.MomentsTests;

/// <summary>
/// Merging is exact up to rounding: however a stream is cut into parts and however the parts'
/// sketches are merged back — any order, any tree shape, with empty sketches anywhere — the moments
/// equal those of one sketch over the whole stream to 1e-12.
/// </summary>
public class MergeShapeTests
{
    private const int StreamLength = 100_000;
    private const double Tight = 1e-12;

    // An offset mean with a small spread (the case that defeats naive formulas) and a heavy-tailed
    // positive stream, with half of the shapes each.
    private static readonly Lazy<double[]> s_offset = new(() => Draw(21, r => Normal.Sample(r, 1000.0, 1.0)));
    private static readonly Lazy<double[]> s_heavy = new(() => Draw(22, r => LogNormal.Sample(r, 0.0, 1.0)));

    public static TheoryData<int> Shapes()
    {
        // 20 batches of 10 seeded shapes: 200 random split/tree shapes in all.
        var data = new TheoryData<int>();
        for (int batch = 0; batch < 20; batch++)
        {
            data.Add(batch);
        }

        return data;
    }

    [Theory]
    [MemberData(nameof(Shapes))]
    public void Any_split_merged_in_any_tree_shape_gives_the_moments_of_the_whole_stream(int batch)
    {
        double[] values = batch % 2 == 0 ? s_offset.Value : s_heavy.Value;
        var whole = new MomentSketch();
        whole.Add(values);

        for (int shape = 0; shape < 10; shape++)
        {
            var rng = new Random((batch * 10) + shape);
            MomentSketch merged = MergeRandomTree(SplitRandomly(values, rng), rng);
            AssertSameMoments(whole, merged, $"batch {batch} shape {shape}");
        }
    }

    [Fact]
    public void Series_sketch_merges_report_the_moment_figures_of_the_whole_stream()
    {
        // The same property one level up: SeriesSketch.Merge forwards to the moments, and the
        // summary's G1/G2 computed from merged sums match those of the whole stream.
        double[] values = s_heavy.Value.AsSpan(0, 20_000).ToArray();
        var whole = new SeriesSketch(seed: 1);
        whole.Add(values);
        var expected = whole.Summarize();

        for (int shape = 0; shape < 5; shape++)
        {
            var rng = new Random(500 + shape);
            int cut1 = rng.Next(values.Length);
            int cut2 = rng.Next(cut1, values.Length);
            var parts = new[] { values[..cut1], values[cut1..cut2], values[cut2..] }
                .Select((part, i) =>
                {
                    var sketch = new SeriesSketch(seed: (ulong)(i + 2));
                    sketch.Add(part);
                    return sketch;
                })
                .OrderBy(_ => rng.Next())
                .ToArray();
            parts[1].Merge(parts[2]);
            parts[0].Merge(parts[1]);
            var actual = parts[0].Summarize();

            Assert.Equal(expected.Count, actual.Count);
            Assert.Equal(expected.Min, actual.Min);
            Assert.Equal(expected.Max, actual.Max);
            Tolerance.Close(expected.Mean!.Value, actual.Mean, Tight, "mean");
            Tolerance.Close(expected.Sum!.Value, actual.Sum, Tight, "sum");
            Tolerance.Close(expected.Variance!.Value, actual.Variance, Tight, "variance");
            Tolerance.Close(expected.Skewness!.Value, actual.Skewness, Tight, "skewness");
            Tolerance.Close(expected.Kurtosis!.Value, actual.Kurtosis, Tight, "kurtosis");
        }
    }

    [Fact]
    public void Merging_an_empty_sketch_changes_nothing()
    {
        var sketch = new MomentSketch();
        sketch.Add(s_heavy.Value.AsSpan(0, 5000));
        var before = sketch.Clone();

        sketch.Merge(new MomentSketch());

        MomentStates.AssertIdentical(before, sketch);
    }

    [Fact]
    public void Merging_into_an_empty_sketch_copies_the_other()
    {
        var other = new MomentSketch();
        other.Add(s_offset.Value.AsSpan(0, 5000));

        var empty = new MomentSketch();
        empty.Merge(other);

        MomentStates.AssertIdentical(other, empty);
    }

    [Fact]
    public void Merging_two_empty_sketches_stays_empty()
    {
        var a = new MomentSketch();
        a.Merge(new MomentSketch());

        Assert.Equal(0, a.Count);
        Assert.True(double.IsNaN(a.Mean));
        Assert.Equal(0, a.Sum);
    }

    private static List<MomentSketch> SplitRandomly(double[] values, Random rng)
    {
        // 1..50 parts at random cut points (parts may be empty); each part is fed by Add(span) or,
        // for some, one value at a time, so both update paths meet in the merges.
        int parts = rng.Next(1, 51);
        int[] cuts = Enumerable.Range(0, parts - 1).Select(_ => rng.Next(0, values.Length + 1))
            .Append(0).Append(values.Length).Order().ToArray();
        var sketches = new List<MomentSketch>();
        for (int p = 0; p + 1 < cuts.Length; p++)
        {
            ReadOnlySpan<double> part = values.AsSpan(cuts[p], cuts[p + 1] - cuts[p]);
            var sketch = new MomentSketch();
            if (rng.Next(4) == 0 && part.Length <= 10_000)
            {
                foreach (double v in part)
                {
                    sketch.Add(v);
                }
            }
            else
            {
                sketch.Add(part);
            }

            sketches.Add(sketch);
        }

        // Extra empty sketches anywhere in the pool.
        int empties = rng.Next(0, 4);
        for (int e = 0; e < empties; e++)
        {
            sketches.Insert(rng.Next(sketches.Count + 1), new MomentSketch());
        }

        return sketches;
    }

    private static MomentSketch MergeRandomTree(List<MomentSketch> pool, Random rng)
    {
        // Repeatedly merge two random members, in a random direction, sometimes via a fresh empty
        // sketch: every binary tree shape and left/right order can come out.
        while (pool.Count > 1)
        {
            MomentSketch a = Take(pool, rng);
            MomentSketch b = Take(pool, rng);
            if (rng.Next(5) == 0)
            {
                var fresh = new MomentSketch();
                fresh.Merge(a);
                a = fresh;
            }

            if (rng.Next(2) == 0)
            {
                a.Merge(b);
                pool.Add(a);
            }
            else
            {
                b.Merge(a);
                pool.Add(b);
            }
        }

        return pool[0];
    }

    private static MomentSketch Take(List<MomentSketch> pool, Random rng)
    {
        int i = rng.Next(pool.Count);
        MomentSketch taken = pool[i];
        pool.RemoveAt(i);
        return taken;
    }

    private static void AssertSameMoments(MomentSketch expected, MomentSketch actual, string label)
    {
        // Count and extremes are exact under any merge; the moment sums are compared in the
        // scale-free forms of NIST/SEMATECH e-Handbook 1.3.5.11 (variance, g1 = √n·M3/M2^1.5,
        // b2 = n·M4/M2²), so one tolerance fits every stream.
        Assert.Equal(expected.Count, actual.Count);
        Assert.Equal(expected.Min, actual.Min);
        Assert.Equal(expected.Max, actual.Max);
        double n = expected.Count;
        Tolerance.Close(expected.Mean, actual.Mean, Tight, $"{label}: mean");
        Tolerance.Close(expected.Sum, actual.Sum, Tight, $"{label}: sum");
        Tolerance.Close(expected.M2 / (n - 1), actual.M2 / (n - 1), Tight, $"{label}: variance");
        Tolerance.Close(Math.Sqrt(n) * expected.M3 / Math.Pow(expected.M2, 1.5), Math.Sqrt(n) * actual.M3 / Math.Pow(actual.M2, 1.5), Tight, $"{label}: g1");
        Tolerance.Close(n * expected.M4 / (expected.M2 * expected.M2), n * actual.M4 / (actual.M2 * actual.M2), Tight, $"{label}: b2");
    }

    private static double[] Draw(int seed, Func<Random, double> sample)
    {
        var rng = new Random(seed);
        var values = new double[StreamLength];
        for (int i = 0; i < values.Length; i++)
        {
            values[i] = sample(rng);
        }

        return values;
    }
}
