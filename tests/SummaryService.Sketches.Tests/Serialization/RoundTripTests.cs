using SummaryService.Sketches.Serialization;

namespace SummaryService.Sketches.Tests.SerializationTests;

/// <summary>
/// Serialize → Deserialize restores the very same sketch: its bytes are identical, it summarizes
/// identically (histogram and rank queries included), and it goes on identically — the KLL
/// random state travels with the bytes, so the restored sketch makes the same compaction choices.
/// </summary>
public class RoundTripTests
{
    public static TheoryData<string> Cases() => new(SketchCases.Names);

    [Theory]
    [MemberData(nameof(Cases))]
    public void Restored_sketch_serializes_to_identical_bytes(string name)
    {
        SeriesSketch original = SketchCases.Build(name);
        byte[] bytes = SketchCodec.Serialize(original);

        SeriesSketch restored = SketchCodec.Deserialize(bytes);

        Assert.Equal(bytes, SketchCodec.Serialize(restored));
        Assert.Equal(original.Count, restored.Count);
    }

    [Theory]
    [MemberData(nameof(Cases))]
    public void Restored_sketch_summarizes_identically(string name)
    {
        SeriesSketch original = SketchCases.Build(name);

        SeriesSketch restored = SketchCodec.Deserialize(SketchCodec.Serialize(original));

        SummaryComparison.AssertEqual(original.Summarize(SummaryComparison.Options), restored.Summarize(SummaryComparison.Options));
    }

    [Theory]
    [MemberData(nameof(Cases))]
    public void Restored_sketch_continues_exactly_like_the_original(string name)
    {
        SeriesSketch original = SketchCases.Build(name);
        SeriesSketch restored = SketchCodec.Deserialize(SketchCodec.Serialize(original));

        // Enough further values to force compactions (and so random choices) at every case's k,
        // fed both ways and by merging in a third sketch.
        double[] more = SketchCases.Uniform(30_000, seed: 99);
        foreach (SeriesSketch s in new[] { original, restored })
        {
            s.Add(more.AsSpan(0, 25_000));
            foreach (double v in more.AsSpan(25_000, 4000))
            {
                s.Add(v);
            }

            var extra = new SeriesSketch(SketchCases.OptionsOf(name), seed: 123);
            extra.Add(more.AsSpan(29_000));
            s.Merge(extra);
        }

        Assert.Equal(SketchCodec.Serialize(original), SketchCodec.Serialize(restored));
        SummaryComparison.AssertEqual(original.Summarize(SummaryComparison.Options), restored.Summarize(SummaryComparison.Options));
    }
}
