using SummaryService.Sketches.Quantiles;
using SummaryService.Sketches.Serialization;

namespace SummaryService.Sketches.Tests.Quantiles;

/// <summary>Trimming a sketch gives back buffer space and nothing else: same answers, same bytes on the wire, same future.</summary>
public class KllTrimTests
{
    [Fact]
    public void Trimmed_sketch_is_as_small_as_its_restored_copy_and_behaves_like_the_untrimmed_one()
    {
        var rng = new Random(82);
        var sketch = new KllSketch(seed: 5);
        for (int i = 0; i < 40; i++)
        {
            sketch.Add(Enumerable.Range(0, 997).Select(_ => rng.NextDouble()).ToArray());
        }

        KllSketch untrimmed = sketch.Clone();
        var wireBefore = SketchCodec.ToState(sketch);
        sketch.TrimExcess();

        Assert.Equal(wireBefore, SketchCodec.ToState(sketch));
        Assert.Equal(SketchCodec.FromState(wireBefore).EstimatedBytes, sketch.EstimatedBytes);
        Assert.True(sketch.EstimatedBytes <= untrimmed.EstimatedBytes);

        // The same coin and the same items: later values give bit-identical sketches.
        double[] more = Enumerable.Range(0, 5000).Select(_ => rng.NextDouble()).ToArray();
        sketch.Add(more);
        untrimmed.Add(more);
        Assert.Equal(SketchCodec.ToState(untrimmed), SketchCodec.ToState(sketch));
    }

    // The estimate is kept up to date as buffers change rather than recounted: after any mix of
    // growth, merges and trims, a trimmed sketch must come back to exactly its items plus the fixed
    // costs (object and three arrays 144 B; per level a 24 B array header and 20 B of bookkeeping).
    [Fact]
    public void Estimated_bytes_track_every_buffer_change()
    {
        var rng = new Random(83);
        var sketch = new KllSketch(seed: 6);
        var other = new KllSketch(seed: 7);
        for (int round = 0; round < 12; round++)
        {
            sketch.Add(Enumerable.Range(0, 50 + (round * 700)).Select(_ => rng.NextDouble()).ToArray());
            other.Add(Enumerable.Range(0, 3000).Select(_ => rng.NextDouble()).ToArray());
            if (round % 3 == 2)
            {
                sketch.Merge(other);
            }

            long grown = sketch.EstimatedBytes;
            sketch.TrimExcess();
            long expected = 144 + (44L * sketch.LevelCount) + (8L * sketch.RetainedItems);
            Assert.Equal(expected, sketch.EstimatedBytes);
            Assert.True(grown >= expected, $"round {round}: {grown} B before the trim, {expected} B after");
            Assert.Equal(expected, sketch.Clone().EstimatedBytes);
        }
    }
}
