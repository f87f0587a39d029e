using SummaryService.Sketches.Serialization;

namespace SummaryService.Sketches.Tests.SerializationTests;

/// <summary>
/// In the count-min phase a restored sketch must go on exactly like the original, including which
/// candidate it drops when a new heavy key arrives and several candidates tie for the lowest count.
/// </summary>
public class RestoredCandidateEvictionTests
{
    [Fact]
    public void Restored_count_min_sketch_evicts_the_same_tied_candidate_as_the_original()
    {
        // Default options; 6000 values on 0..4999 skewed to small keys leave 32 candidates of which
        // many tie at the lowest count (19 here). The 26th further value is a key whose estimate
        // passes that floor: the original drops candidate 305 (earliest in arrival order), the
        // restored sketch drops candidate 5 (first of its rebuilt ranking).
        var rng = new Random(4);
        double Next() => Math.Floor(5000 * Math.Pow(rng.NextDouble(), 2));
        var original = new SeriesSketch(seed: 3);
        for (int i = 0; i < 6000; i++)
        {
            original.Add(Next());
        }

        Assert.False(original.Modes.IsExact);
        SeriesSketch restored = SketchCodec.Deserialize(SketchCodec.Serialize(original));
        for (int i = 0; i < 26; i++)
        {
            double v = Next();
            original.Add(v);
            restored.Add(v);
        }

        // Keys are the bits of the values; compared as values the difference reads 305 against 5.
        Assert.Equal(
            SketchCodec.ToState(original.Modes).Candidates.Select(BitConverter.Int64BitsToDouble),
            SketchCodec.ToState(restored.Modes).Candidates.Select(BitConverter.Int64BitsToDouble));
        Assert.Equal(SketchCodec.Serialize(original), SketchCodec.Serialize(restored));
    }
}
