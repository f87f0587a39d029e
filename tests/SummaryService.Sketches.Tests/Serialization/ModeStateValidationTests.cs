using SummaryService.Formats.V1;
using SummaryService.Sketches.Serialization;

namespace SummaryService.Sketches.Tests.SerializationTests;

/// <summary>
/// Mode states a sketch could not be in are refused with <see cref="SketchFormatException"/>
/// naming the field: invalid settings; in the exact phase, keys out of order or not finite values
/// and counts that do not add up; in the count-min phase, a table of the wrong size, rows that
/// count more values than there are, and candidates out of order or over their limit.
/// </summary>
public class ModeStateValidationTests
{
    [Fact]
    public void Base_states_cover_both_phases()
    {
        ModeState exact = BaseStates.ExactModes().Modes;
        ModeState table = BaseStates.CountMinModes().Modes;

        Assert.True(exact.ExactKeys.Count >= 3);
        Assert.Empty(exact.Counters);
        Assert.Empty(table.ExactKeys);
        Assert.Equal(8 * 2, table.Counters.Count);
        Assert.True(table.Candidates.Count >= 2);
    }

    [Theory]
    [InlineData("keys-descending", "modes.exact_keys[1]")]
    [InlineData("keys-duplicate", "modes.exact_keys[1]")]
    [InlineData("counts-fewer-than-keys", "modes.exact_keys has")]
    [InlineData("count-of-zero", "modes.exact_counts[0] is 0")]
    [InlineData("counts-add-up-wrong", "modes.count is 100")]
    [InlineData("more-keys-than-exact-limit", "over modes.exact_limit")]
    [InlineData("negative-zero-key", "modes.exact_keys[0]")]
    [InlineData("nan-key", "keys must be finite")]
    [InlineData("count-beyond-a-long", "modes.exact_counts[0]")]
    [InlineData("candidates-without-table", "modes.candidates is set")]
    public void Impossible_exact_phase_is_rejected_naming_the_field(string spoil, string field)
    {
        SeriesSketchState state = BaseStates.ExactModes();
        ModeState m = state.Modes;
        switch (spoil)
        {
            case "keys-descending":
                (m.ExactKeys[0], m.ExactKeys[1]) = (m.ExactKeys[1], m.ExactKeys[0]);
                (m.ExactCounts[0], m.ExactCounts[1]) = (m.ExactCounts[1], m.ExactCounts[0]);
                break;
            case "keys-duplicate":
                m.ExactKeys[1] = m.ExactKeys[0];
                break;
            case "counts-fewer-than-keys":
                m.ExactCounts.RemoveAt(m.ExactCounts.Count - 1);
                break;
            case "count-of-zero":
                m.ExactCounts[1] += m.ExactCounts[0];
                m.ExactCounts[0] = 0;
                break;
            case "counts-add-up-wrong":
                m.ExactCounts[0] += 1;
                break;
            case "more-keys-than-exact-limit":
                m.ExactLimit = (uint)m.ExactKeys.Count - 1;
                break;
            case "negative-zero-key":
                m.ExactKeys[0] = long.MinValue; // the bits of −0.0, smallest as a signed key
                break;
            case "nan-key":
                m.ExactKeys[^1] = BitConverter.DoubleToInt64Bits(double.NaN) & long.MaxValue; // positive NaN bits sort last
                break;
            case "count-beyond-a-long":
                m.ExactCounts[0] = ulong.MaxValue;
                break;
            default:
                m.Candidates.Add(m.ExactKeys[0]);
                break;
        }

        var ex = BaseStates.Rejection(state);

        Assert.Contains(field, ex.Message);
    }

    [Theory]
    [InlineData("counters-one-short", "modes.counters has 15 cells")]
    [InlineData("counters-one-extra", "modes.counters has 17 cells")]
    [InlineData("row-sum-above-count", "modes.counters row 1")]
    [InlineData("counter-beyond-a-long", "modes.counters[3]")]
    [InlineData("candidates-descending", "modes.candidates[1]")]
    [InlineData("candidates-duplicate", "modes.candidates[1]")]
    [InlineData("more-candidates-than-limit", "over modes.candidate_limit")]
    [InlineData("exact-counts-beside-table", "modes has both")]
    public void Impossible_count_min_phase_is_rejected_naming_the_field(string spoil, string field)
    {
        SeriesSketchState state = BaseStates.CountMinModes();
        ModeState m = state.Modes;
        switch (spoil)
        {
            case "counters-one-short":
                m.Counters.RemoveAt(m.Counters.Count - 1);
                break;
            case "counters-one-extra":
                m.Counters.Add(0);
                break;
            case "row-sum-above-count":
                // Conservative update raises a row's counters by at most the values counted, so a
                // row adds up to at most count; row 1 starts at cell 8.
                m.Counters[8] += m.Count;
                break;
            case "counter-beyond-a-long":
                m.Counters[3] = ulong.MaxValue;
                break;
            case "candidates-descending":
                (m.Candidates[0], m.Candidates[1]) = (m.Candidates[1], m.Candidates[0]);
                break;
            case "candidates-duplicate":
                m.Candidates[1] = m.Candidates[0];
                break;
            case "more-candidates-than-limit":
                m.CandidateLimit = (uint)m.Candidates.Count - 1;
                break;
            default:
                m.ExactKeys.Add(m.Candidates[0]);
                m.ExactCounts.Add(1);
                break;
        }

        var ex = BaseStates.Rejection(state);

        Assert.Contains(field, ex.Message);
    }

    [Theory]
    [InlineData("width-one")]
    [InlineData("width-over-limit")]
    [InlineData("depth-zero")]
    [InlineData("depth-33")]
    [InlineData("candidate-limit-zero")]
    [InlineData("exact-limit-beyond-an-int")]
    [InlineData("resolution-nan")]
    [InlineData("resolution-negative")]
    [InlineData("resolution-infinite")]
    public void Invalid_settings_are_rejected(string spoil)
    {
        SeriesSketchState state = BaseStates.ExactModes();
        ModeState m = state.Modes;
        switch (spoil)
        {
            case "width-one":
                m.Width = 1;
                break;
            case "width-over-limit":
                m.Width = (1u << 20) + 1;
                break;
            case "depth-zero":
                m.Depth = 0;
                break;
            case "depth-33":
                m.Depth = 33;
                break;
            case "candidate-limit-zero":
                m.CandidateLimit = 0;
                break;
            case "exact-limit-beyond-an-int":
                m.ExactLimit = uint.MaxValue;
                break;
            case "resolution-nan":
                m.Resolution = double.NaN;
                break;
            case "resolution-negative":
                m.Resolution = -0.5;
                break;
            default:
                m.Resolution = double.PositiveInfinity;
                break;
        }

        var ex = BaseStates.Rejection(state);

        Assert.Contains("modes settings are invalid", ex.Message);
    }

    [Fact]
    public void Component_reader_applies_the_same_checks()
    {
        ModeState state = BaseStates.CountMinModes().Modes;
        state.Counters.RemoveAt(0);

        var ex = Assert.Throws<SketchFormatException>(() => SketchCodec.FromState(state));

        Assert.Contains("modes.counters", ex.Message);
    }
}
