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
}
