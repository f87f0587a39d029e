using Google.Protobuf;
using SummaryService.Formats.V1;
using SummaryService.Sketches.Quantiles;
using SummaryService.Sketches.Serialization;

namespace SummaryService.Sketches.Tests.SerializationTests;

/// <summary>
/// KLL states a sketch could not be in are refused with <see cref="SketchFormatException"/>
/// naming the field: k out of range, level counts out of range, non-finite or out-of-range items,
/// unsorted upper levels, more items than the levels hold, and a count other than the levels'
/// weight Σ |items_h| · 2^h.
/// </summary>
public class KllStateValidationTests
{
    [Fact]
    public void Base_state_has_items_on_level_zero_and_a_sorted_level_above()
    {
        KllState q = BaseStates.ExactModes().Quantiles;

        Assert.NotEmpty(q.Levels[0].Items);
        Assert.True(UpperLevelWithDistinctItems(q) > 0);
    }

    [Theory]
    [InlineData(0u)]
    [InlineData(7u)]
    [InlineData(65537u)]
    public void K_out_of_range_is_rejected(uint k)
    {
        SeriesSketchState state = BaseStates.ExactModes();
        state.Quantiles.K = k;

        var ex = BaseStates.Rejection(state);

        Assert.Contains($"quantiles.k is {k}", ex.Message);
    }

    [Theory]
    [InlineData(0)]
    [InlineData(63)]
    public void Level_count_out_of_range_is_rejected(int levels)
    {
        SeriesSketchState state = BaseStates.ExactModes();
        KllState q = state.Quantiles;
        while (q.Levels.Count > levels)
        {
            q.Levels.RemoveAt(q.Levels.Count - 1);
        }

        while (q.Levels.Count < levels)
        {
            q.Levels.Add(new KllLevel());
        }

        var ex = BaseStates.Rejection(state);

        Assert.Contains($"quantiles.levels has {levels} levels", ex.Message);
    }

    [Theory]
    [InlineData(double.NaN, 0)]
    [InlineData(double.PositiveInfinity, 0)]
    [InlineData(double.NegativeInfinity, 1)]
    [InlineData(double.NaN, 1)]
    public void Non_finite_item_is_rejected_naming_its_level_and_index(double bad, int upper)
    {
        SeriesSketchState state = BaseStates.ExactModes();
        int level = upper == 0 ? 0 : UpperLevelWithDistinctItems(state.Quantiles);
        state.Quantiles.Levels[level].Items[0] = bad;

        var ex = BaseStates.Rejection(state);

        Assert.Contains($"quantiles.levels[{level}].items[0] is", ex.Message);
        Assert.Contains("finite", ex.Message);
    }

    [Fact]
    public void Unsorted_level_above_zero_is_rejected()
    {
        SeriesSketchState state = BaseStates.ExactModes();
        int level = UpperLevelWithDistinctItems(state.Quantiles);
        var items = state.Quantiles.Levels[level].Items;
        (items[0], items[^1]) = (items[^1], items[0]);

        var ex = BaseStates.Rejection(state);

        Assert.Contains($"quantiles.levels[{level}].items[", ex.Message);
        Assert.Contains("sorted", ex.Message);
    }

    [Fact]
    public void Unsorted_level_zero_is_accepted()
    {
        // Level 0 is the unsorted input buffer of a live sketch, so order there is legal.
        SeriesSketchState state = BaseStates.ExactModes();
        var items = state.Quantiles.Levels[0].Items;
        Assert.True(items.Count >= 2);
        var reversed = items.Reverse().ToArray();
        items.Clear();
        items.AddRange(reversed);

        Assert.Equal(BaseStates.Count, SketchCodec.Deserialize(state.ToByteArray()).Count);
    }

    [Theory]
    [InlineData(false)]
    [InlineData(true)]
    public void Item_outside_min_max_is_rejected(bool above)
    {
        SeriesSketchState state = BaseStates.ExactModes();
        KllState q = state.Quantiles;
        int level = UpperLevelWithDistinctItems(q);
        var items = q.Levels[level].Items;
        if (above)
        {
            items[^1] = q.Max + 1;
        }
        else
        {
            items[0] = q.Min - 1;
        }

        var ex = BaseStates.Rejection(state);

        Assert.Contains($"quantiles.levels[{level}].items[", ex.Message);
        Assert.Contains("outside [min", ex.Message);
    }

    [Fact]
    public void More_items_than_the_levels_hold_is_rejected()
    {
        SeriesSketchState state = BaseStates.ExactModes();
        KllState q = state.Quantiles;
        int capacity = KllSketch.TotalCapacity((int)q.K, q.Levels.Count);
        int retained = q.Levels.Sum(l => l.Items.Count);
        int extra = capacity - retained + 1;
        q.Levels[0].Items.AddRange(Enumerable.Repeat(q.Min, extra));
        q.Count += (ulong)extra;

        var ex = BaseStates.Rejection(state);

        Assert.Contains($"more than the {capacity} items", ex.Message);
    }

    [Theory]
    [InlineData(1)]
    [InlineData(-1)]
    public void Count_other_than_the_levels_weight_is_rejected(int change)
    {
        SeriesSketchState state = BaseStates.ExactModes();
        state.Quantiles.Count = (ulong)((long)state.Quantiles.Count + change);

        var ex = BaseStates.Rejection(state);

        Assert.Contains($"quantiles.count is {BaseStates.Count + change}", ex.Message);
        Assert.Contains($"stand for {BaseStates.Count} values", ex.Message);
    }

    [Fact]
    public void Levels_whose_weight_overflows_64_bits_are_rejected()
    {
        // 8 items at level 61 stand for 8 · 2^61 = 2^64 values, more than any count; the shift
        // wraps to 0, so the levels seem to weigh exactly the 100 values of level 0 and below.
        SeriesSketchState state = BaseStates.ExactModes();
        KllState q = state.Quantiles;
        while (q.Levels.Count < 62)
        {
            q.Levels.Add(new KllLevel());
        }

        q.Levels[61].Items.AddRange(Enumerable.Repeat(q.Min, 8));

        var ex = BaseStates.Rejection(state);

        Assert.Contains("quantiles.", ex.Message);
    }

    [Theory]
    [InlineData("min-nan", "quantiles.min/max")]
    [InlineData("max-infinite", "quantiles.min/max")]
    [InlineData("min-above-max", "quantiles.min")]
    [InlineData("count-zero-with-range", "quantiles.count is 0")]
    [InlineData("compactions-beyond-a-long", "quantiles.levels[0].compactions")]
    public void Impossible_range_or_bookkeeping_is_rejected_naming_the_field(string spoil, string field)
    {
        SeriesSketchState state = BaseStates.ExactModes();
        KllState q = state.Quantiles;
        switch (spoil)
        {
            case "min-nan":
                q.Min = double.NaN;
                break;
            case "max-infinite":
                q.Max = double.PositiveInfinity;
                break;
            case "min-above-max":
                (q.Min, q.Max) = (q.Max, q.Min);
                break;
            case "count-zero-with-range":
                q.Count = 0;
                break;
            default:
                q.Levels[0].Compactions = ulong.MaxValue;
                break;
        }

        var ex = BaseStates.Rejection(state);

        Assert.Contains(field, ex.Message);
    }

    [Fact]
    public void Component_reader_applies_the_same_checks()
    {
        KllState state = BaseStates.ExactModes().Quantiles;
        state.K = 7;

        var ex = Assert.Throws<SketchFormatException>(() => SketchCodec.FromState(state));

        Assert.Contains("quantiles.k", ex.Message);
    }

    // The lowest level above 0 holding at least three distinct items, so that reordering them
    // breaks the order and the first and last lie strictly inside the range.
    private static int UpperLevelWithDistinctItems(KllState q)
    {
        for (int h = 1; h < q.Levels.Count; h++)
        {
            if (q.Levels[h].Items.Distinct().Count() >= 3)
            {
                return h;
            }
        }

        Assert.Fail("base state has no upper level with three distinct items");
        return -1;
    }
}
