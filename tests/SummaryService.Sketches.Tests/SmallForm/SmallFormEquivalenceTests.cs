using SummaryService.Sketches.Serialization;
using SummaryService.Sketches.Tests.SerializationTests;

namespace SummaryService.Sketches.Tests.SmallForm;

/// <summary>
/// A sketch that starts small (raw values) and grows into the full composite must be, at every
/// point, the sketch the full composite alone would have built from the same values: the same
/// serialized bytes, the same summary, the same merges, and the same compactions afterwards.
/// </summary>
public class SmallFormEquivalenceTests
{
    private static readonly int[] Counts = [0, 1, 2, 4, 10, 31, 32, 33, 40, 300];

    public static TheoryData<string, int, string> Inputs()
    {
        var data = new TheoryData<string, int, string>();
        foreach (string options in SmallFormCases.OptionNames)
        {
            foreach (int count in Counts)
            {
                foreach (string feed in SmallFormCases.Feeds)
                {
                    data.Add(options, count, feed);
                }
            }
        }

        return data;
    }

    [Theory]
    [MemberData(nameof(Inputs))]
    public void Small_and_grown_sketches_equal_the_full_form(string options, int count, string feed)
    {
        SeriesSketch sketch = SmallFormCases.Build(count, feed, options, seed: 5);
        SeriesSketch full = SmallFormCases.BuildFull(count, feed, options, seed: 5);

        int limit = Math.Min(SeriesSketch.SmallValueLimit, options == "limit3" ? 3 : SeriesSketch.SmallValueLimit);
        Assert.Equal(count <= limit, sketch.IsSmall);
        AssertSame(full, sketch);

        // Once grown, level 0's buffer may be a few items wider than the full form's (it grew in other steps).
        if (sketch.IsSmall)
        {
            Assert.True(sketch.EstimatedBytes <= full.EstimatedBytes, $"{sketch.EstimatedBytes} B small vs {full.EstimatedBytes} B full");
        }
    }

    [Theory]
    [MemberData(nameof(Inputs))]
    public void Small_sketches_go_on_to_compact_exactly_like_the_full_form(string options, int count, string feed)
    {
        SeriesSketch sketch = SmallFormCases.Build(count, feed, options, seed: 6);
        SeriesSketch full = SmallFormCases.BuildFull(count, feed, options, seed: 6);

        // Enough further values that every option set's KLL part compacts, so the seeded coin is drawn.
        double[] more = SmallFormCases.Values(5000, offset: 777);
        SmallFormCases.Feed(sketch, more, feed);
        SmallFormCases.Feed(full, more, feed);

        Assert.False(sketch.Quantiles!.IsExact);
        AssertSame(full, sketch);
    }

    public static TheoryData<string, int, int> MergeInputs()
    {
        var data = new TheoryData<string, int, int>();
        (int, int)[] pairs = [(0, 0), (0, 4), (4, 0), (4, 4), (16, 16), (16, 17), (4, 30), (1, 31), (4, 300), (300, 4), (40, 40)];
        foreach (string options in SmallFormCases.OptionNames)
        {
            foreach ((int a, int b) in pairs)
            {
                data.Add(options, a, b);
            }
        }

        return data;
    }

    [Theory]
    [MemberData(nameof(MergeInputs))]
    public void Merges_in_every_pairing_of_forms_equal_the_full_merge(string options, int a, int b)
    {
        SeriesSketch expected = SmallFormCases.BuildFull(a, "span", options, seed: 7);
        expected.Merge(SmallFormCases.BuildFull(b, "single", options, seed: 8, offset: 500));
        byte[] expectedBytes = SketchCodec.Serialize(expected);

        foreach (bool targetSmall in new[] { true, false })
        {
            foreach (bool sourceSmall in new[] { true, false })
            {
                SeriesSketch target = targetSmall ? SmallFormCases.Build(a, "span", options, seed: 7) : SmallFormCases.BuildFull(a, "span", options, seed: 7);
                SeriesSketch source = sourceSmall ? SmallFormCases.Build(b, "single", options, seed: 8, offset: 500) : SmallFormCases.BuildFull(b, "single", options, seed: 8, offset: 500);
                byte[] sourceBefore = SketchCodec.Serialize(source);
                bool sourceWasSmall = source.IsSmall;

                target.Merge(source);

                Assert.Equal(expectedBytes, SketchCodec.Serialize(target));
                SummaryComparison.AssertEqual(expected.Summarize(SummaryComparison.Options), target.Summarize(SummaryComparison.Options));
                Assert.Equal(sourceBefore, SketchCodec.Serialize(source));
                Assert.Equal(sourceWasSmall, source.IsSmall);
            }
        }
    }

    [Fact]
    public void Merging_a_small_sketch_into_itself_doubles_it_like_the_full_form()
    {
        SeriesSketch sketch = SmallFormCases.Build(10, "span", "default", seed: 9);
        SeriesSketch full = SmallFormCases.BuildFull(10, "span", "default", seed: 9);

        sketch.Merge(sketch);
        full.Merge(full);

        Assert.True(sketch.IsSmall);
        AssertSame(full, sketch);
    }

    [Fact]
    public void Summarizing_serializing_and_cloning_leave_a_small_sketch_small()
    {
        SeriesSketch sketch = SmallFormCases.Build(4, "span", "default", seed: 10);

        _ = sketch.Summarize(SummaryComparison.Options);
        _ = SketchCodec.Serialize(sketch);
        SeriesSketch copy = sketch.Clone();
        copy.Add(1.5);
        var merged = new SeriesSketch(seed: 3);
        merged.Merge(sketch);

        Assert.True(sketch.IsSmall);
        Assert.True(copy.IsSmall);
        Assert.True(merged.IsSmall);
        Assert.Equal(4, sketch.Count);
        Assert.Equal(5, copy.Count);
        Assert.True(SketchCodec.Deserialize(SketchCodec.Serialize(sketch)).IsSmall);
    }

    [Fact]
    public void Invalid_settings_are_still_refused_when_the_sketch_is_made()
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => new SeriesSketch(new SeriesSketchOptions { K = 4 }));
        Assert.Throws<ArgumentOutOfRangeException>(() => new SeriesSketch(new SeriesSketchOptions { ModeWidth = 1 }));
        Assert.Throws<ArgumentOutOfRangeException>(() => new SeriesSketch(new SeriesSketchOptions { ModeResolution = -1 }));
    }

    [Fact]
    public void Restored_parts_that_disagree_with_each_other_stay_in_the_full_form()
    {
        // Quantile items {1, 2} but exact mode counts {3: 2}: consistent counts, different values. A
        // small sketch would rebuild its modes from the items, so this one must keep the parts given.
        var state = SketchCodec.ToState(SmallFormCases.BuildFull(2, "span", "default", seed: 1));
        state.Quantiles.Levels[0].Items.Clear();
        state.Quantiles.Levels[0].Items.AddRange([1.0, 2.0]);
        state.Quantiles.Min = state.Moments.Min = 1.0;
        state.Quantiles.Max = state.Moments.Max = 2.0;
        state.Moments.Mean = 1.5;
        state.Modes.ExactKeys.Clear();
        state.Modes.ExactKeys.Add(BitConverter.DoubleToInt64Bits(3.0));
        state.Modes.ExactCounts.Clear();
        state.Modes.ExactCounts.Add(2UL);
        var buckets = new SummaryService.Sketches.Buckets.LogBucketSketch();
        buckets.Add([1.0, 2.0]);
        state.LogBuckets = SketchCodec.ToState(buckets);

        SeriesSketch restored = SketchCodec.FromState(state);

        Assert.False(restored.IsSmall);
        Assert.Equal(3.0, restored.Summarize().Modes[0].Value);
    }

    private static void AssertSame(SeriesSketch expected, SeriesSketch actual)
    {
        Assert.Equal(expected.Count, actual.Count);
        Assert.Equal(Convert.ToBase64String(SketchCodec.Serialize(expected)), Convert.ToBase64String(SketchCodec.Serialize(actual)));
        SummaryComparison.AssertEqual(expected.Summarize(SummaryComparison.Options), actual.Summarize(SummaryComparison.Options));
    }
}
