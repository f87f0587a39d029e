using SummaryService.Sketches.Quantiles;
using SummaryService.Sketches.Tests.Support;

namespace SummaryService.Sketches.Tests.Quantiles;

/// <summary>However a stream is split and the parts merged, the merged sketch stays within the bounds it reports.</summary>
public class KllMergeTests
{
    private const double Confidence = 0.99;
    private static readonly double[] Probabilities = [0, 0.01, 0.25, 0.5, 0.75, 0.9, 0.99, 1];

    [Fact]
    public void Random_splits_merged_in_random_trees_stay_within_the_reported_bounds()
    {
        double[] values = TestData.LogNormal(200_000, seed: 31);
        var counter = new QuantileTrialCounter(new ExactReference(values), Probabilities, Confidence);
        var shapes = new Random(32);
        for (int trial = 0; trial < 100; trial++)
        {
            var parts = RandomSplit(values, shapes.Next(1, 65), shapes)
                .Select((part, i) =>
                {
                    var sketch = new KllSketch(seed: (ulong)((trial * 1000) + i + 1));
                    sketch.Add(part);
                    return sketch;
                })
                .ToList();
            KllSketch merged = MergeInRandomTree(parts, shapes);

            Assert.Equal(values.Length, merged.Count);
            Assert.Equal(values.Min(), merged.Min);
            Assert.Equal(values.Max(), merged.Max);
            counter.Score(merged);
        }

        counter.AssertWithinConfidence("merged lognormal");
    }

    [Fact]
    public void Merging_exact_sketches_that_fit_together_stays_exact()
    {
        var a = new KllSketch(seed: 1);
        var b = new KllSketch(seed: 2);
        a.Add([5, 1, 3]);
        b.Add([4, 2]);
        a.Merge(b);

        Assert.True(a.IsExact);
        Assert.Equal(0, a.RankError(Confidence));
        Assert.Equal([1, 2, 3, 4, 5], a.CreateView().Values.ToArray());
    }

    [Fact]
    public void Merging_an_empty_sketch_changes_nothing_and_merging_into_one_copies()
    {
        var data = new KllSketch(seed: 3);
        data.Add(TestData.Uniform(10_000, seed: 33));
        var before = Serialization.SketchCodec.ToState(data);

        data.Merge(new KllSketch(seed: 4));
        Assert.Equal(before, Serialization.SketchCodec.ToState(data));

        var empty = new KllSketch(seed: 5);
        empty.Merge(data);
        Assert.Equal(data.Count, empty.Count);
        Assert.Equal(data.CreateView().Quantile(0.5), empty.CreateView().Quantile(0.5));
    }

    [Fact]
    public void Merging_a_sketch_with_itself_doubles_every_count()
    {
        var sketch = new KllSketch(seed: 6);
        sketch.Add([1, 2, 3]);
        sketch.Merge(sketch);
        Assert.Equal(6, sketch.Count);
        Assert.Equal(4, sketch.CreateView().CountAtOrBelow(2));
    }

    internal static List<double[]> RandomSplit(double[] values, int parts, Random rng)
    {
        var cuts = Enumerable.Range(0, parts - 1).Select(_ => rng.Next(0, values.Length + 1)).Append(0).Append(values.Length).Distinct().Order().ToArray();
        var pieces = new List<double[]>();
        for (int i = 0; i + 1 < cuts.Length; i++)
        {
            pieces.Add(values[cuts[i]..cuts[i + 1]]);
        }

        return pieces;
    }

    private static KllSketch MergeInRandomTree(List<KllSketch> sketches, Random rng)
    {
        while (sketches.Count > 1)
        {
            int i = rng.Next(sketches.Count);
            KllSketch left = sketches[i];
            sketches.RemoveAt(i);
            int j = rng.Next(sketches.Count);
            left.Merge(sketches[j]);
            sketches[j] = left;
        }

        return sketches[0];
    }
}
