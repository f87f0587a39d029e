using SummaryService.Sketches.Serialization;

namespace SummaryService.Sketches.Tests.SerializationTests;

/// <summary>The one acceptable pair of outcomes for untrusted bytes.</summary>
internal static class MalformedInput
{
    /// <summary>
    /// True when the bytes are rejected with <see cref="SketchFormatException"/>; false when they
    /// parse to a sketch that then summarizes and round-trips. Any other exception fails the test
    /// with the case named.
    /// </summary>
    public static bool RejectsOrWorks(byte[] bytes, string label)
    {
        SeriesSketch sketch;
        try
        {
            sketch = SketchCodec.Deserialize(bytes);
        }
        catch (SketchFormatException)
        {
            return true;
        }
        catch (Exception ex)
        {
            Assert.Fail($"{label}: Deserialize threw {ex.GetType().Name} instead of SketchFormatException: {ex.Message}");
            throw;
        }

        try
        {
            sketch.Summarize(SummaryComparison.Options);
            byte[] again = SketchCodec.Serialize(sketch);
            Assert.Equal(again, SketchCodec.Serialize(SketchCodec.Deserialize(again)));
        }
        catch (Exception ex) when (ex is not Xunit.Sdk.XunitException)
        {
            Assert.Fail($"{label}: accepted, but the sketch then failed with {ex.GetType().Name}: {ex.Message}");
        }

        return false;
    }
}
