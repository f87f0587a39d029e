using Google.Protobuf;
using SummaryService.Formats.V1;
using SummaryService.Sketches.Serialization;

namespace SummaryService.Sketches.Tests.SerializationTests;

/// <summary>
/// Small valid states to spoil one field at a time. k = 8 gives several KLL levels from 100
/// values; the mode settings are shrunk so that a table of 8 × 2 counters and 4 candidates is
/// reached quickly.
/// </summary>
internal static class BaseStates
{
    public const int Count = 100;

    public static readonly SeriesSketchOptions Options = new()
    {
        K = 8,
        ModeExactLimit = 16,
        ModeWidth = 8,
        ModeDepth = 2,
        ModeCandidates = 4,
    };

    /// <summary>100 values on 10 distinct integers: modes in the exact phase.</summary>
    public static SeriesSketchState ExactModes() => SketchCodec.ToState(Sketch(10, Count));

    /// <summary>100 values on 50 distinct integers: modes in the count-min phase.</summary>
    public static SeriesSketchState CountMinModes() => SketchCodec.ToState(Sketch(50, Count));

    public static SeriesSketch Sketch(int distinct, int count, int offset = 0)
    {
        var sketch = new SeriesSketch(Options, seed: 77);
        var rng = new Random(distinct);
        for (int i = 0; i < count; i++)
        {
            sketch.Add(offset + rng.Next(distinct));
        }

        return sketch;
    }

    /// <summary>The exception that reading these bytes must throw, for its message to be checked.</summary>
    public static SketchFormatException Rejection(SeriesSketchState state)
    {
        byte[] bytes = state.ToByteArray();
        return Assert.Throws<SketchFormatException>(() => SketchCodec.Deserialize(bytes));
    }
}
