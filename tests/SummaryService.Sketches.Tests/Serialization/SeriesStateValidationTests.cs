using Google.Protobuf;
using SummaryService.Formats.V1;
using SummaryService.Sketches.Serialization;

namespace SummaryService.Sketches.Tests.SerializationTests;

/// <summary>
/// The envelope is checked before its parts are trusted: a version this reader does not know, a
/// missing part, or parts that do not describe the same values are refused, and the message says
/// which field is wrong.
/// </summary>
public class SeriesStateValidationTests
{
    [Fact]
    public void Base_state_is_valid()
    {
        // Every rejection below changes this state in one place only.
        Assert.Equal(BaseStates.Count, SketchCodec.Deserialize(BaseStates.ExactModes().ToByteArray()).Count);
        Assert.Equal(BaseStates.Count, SketchCodec.Deserialize(BaseStates.CountMinModes().ToByteArray()).Count);
    }

    [Theory]
    [InlineData(0u)]
    [InlineData(4u)]
    [InlineData(uint.MaxValue)]
    public void Unknown_version_is_rejected(uint version)
    {
        SeriesSketchState state = BaseStates.ExactModes();
        state.Version = version;

        var ex = BaseStates.Rejection(state);

        Assert.Contains($"version is {version}", ex.Message);
    }

    [Theory]
    [InlineData("moments")]
    [InlineData("quantiles")]
    [InlineData("modes")]
    [InlineData("log_buckets")]
    public void Missing_part_is_rejected(string part)
    {
        SeriesSketchState state = BaseStates.ExactModes();
        switch (part)
        {
            case "moments":
                state.Moments = null;
                break;
            case "quantiles":
                // Optional from version 2 on (the compact form has none); version 1 always had it.
                state.Version = SketchCodec.RankOnlyVersion;
                state.LogBuckets = null;
                state.Quantiles = null;
                break;
            case "log_buckets":
                // Absent only with no_log_buckets set, so a message cut short is not taken for one without.
                state.LogBuckets = null;
                break;
            default:
                state.Modes = null;
                break;
        }

        var ex = BaseStates.Rejection(state);

        Assert.Contains($"{part} is missing", ex.Message);
    }

    [Theory]
    [InlineData("moments")]
    [InlineData("quantiles")]
    [InlineData("modes")]
    public void Part_with_a_different_count_is_rejected(string part)
    {
        // Each part is itself valid — it is the state of the same sketch one value short — so only
        // the cross-check can catch it.
        SeriesSketchState state = BaseStates.ExactModes();
        SeriesSketchState shorter = SketchCodec.ToState(BaseStates.Sketch(10, BaseStates.Count - 1));
        switch (part)
        {
            case "moments":
                state.Moments = shorter.Moments;
                break;
            case "quantiles":
                state.Quantiles = shorter.Quantiles;
                break;
            default:
                state.Modes = shorter.Modes;
                break;
        }

        var ex = BaseStates.Rejection(state);

        Assert.Contains("counts disagree", ex.Message);
        Assert.Contains($"{part}.count {BaseStates.Count - 1}", ex.Message);
    }

    [Fact]
    public void Parts_with_different_extremes_are_rejected()
    {
        // Moments of 100 values in [5, 14], quantiles and modes of 100 values in [0, 9]: a series
        // sketch feeds all parts the same values, so no sketch can be in this state. Accepted, the
        // summary would report min 5 beside a 0th percentile of 0.
        SeriesSketchState state = BaseStates.ExactModes();
        state.Moments = SketchCodec.ToState(BaseStates.Sketch(10, BaseStates.Count, offset: 5)).Moments;

        var ex = BaseStates.Rejection(state);

        Assert.Contains("min", ex.Message);
    }
}
