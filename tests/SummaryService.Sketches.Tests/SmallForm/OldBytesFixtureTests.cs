using SummaryService.Formats.V1;
using SummaryService.Sketches.Serialization;
using SummaryService.Sketches.Tests.SerializationTests;

namespace SummaryService.Sketches.Tests.SmallForm;

/// <summary>
/// Bytes written by the code before small sketches existed (Fixtures/sketches-before-small-form.txt,
/// generated from the inputs of <see cref="SmallFormCases"/> at commit c8211ec, format version 1)
/// must still load; the parts they hold are the parts the same inputs build now (the KLL part where
/// it never compacted), so snapshots and logs on disk keep loading and a replay rebuilds the same
/// moment parts. Version 2 adds the log buckets and stops counting modes of continuous data past the
/// exact limit, which the old bytes cannot show; <see cref="Legacy.Format1SketchFixtureTests"/> checks the old answers.
/// </summary>
public class OldBytesFixtureTests
{
    private static readonly string FixturePath = Path.Combine(AppContext.BaseDirectory, "SmallForm", "Fixtures", "sketches-before-small-form.txt");

    public static TheoryData<string> Lines()
    {
        var data = new TheoryData<string>();
        foreach (string line in File.ReadLines(FixturePath))
        {
            if (!line.StartsWith('#'))
            {
                data.Add(line);
            }
        }

        return data;
    }

    [Fact]
    public void Fixture_holds_every_case()
    {
        // 3 option sets × 9 counts × 3 feeds, plus 3 option sets × 8 merges.
        Assert.Equal(105, Lines().Count);
    }

    [Theory]
    [MemberData(nameof(Lines))]
    public void Same_inputs_build_the_moment_and_quantile_parts_the_previous_code_wrote_where_nothing_compacted(string line)
    {
        (SeriesSketchState old, SeriesSketch rebuilt) = Parse(line);
        SeriesSketchState now = SketchCodec.ToState(rebuilt);

        Assert.Equal(old.Moments, now.Moments);

        // A KLL part that never compacted holds the values themselves, as before. Compaction now keeps
        // at least 16 items on a level where it kept 8 (KllSketch.MinLevelWidth), so a part that
        // compacted differs in its items but not in what it stands for.
        bool compacted = old.Quantiles.Levels.Any(l => l.Compactions > 0);
        if (compacted)
        {
            Assert.Equal((old.Quantiles.K, old.Quantiles.Count, old.Quantiles.Min, old.Quantiles.Max), (now.Quantiles.K, now.Quantiles.Count, now.Quantiles.Min, now.Quantiles.Max));
        }
        else
        {
            Assert.Equal(old.Quantiles, now.Quantiles);
        }

        // Mode counts are the same while they are exact or the data is discrete; past the exact
        // limit on non-integral values the sketch now stops counting (the log buckets give modes).
        Assert.True(now.Modes.Continuous || old.Modes.Equals(now.Modes), "modes differ though the data was counted");
    }

    [Theory]
    [MemberData(nameof(Lines))]
    public void Old_bytes_load_with_their_parts_unchanged(string line)
    {
        (SeriesSketchState old, SeriesSketch rebuilt) = Parse(line);

        SeriesSketch loaded = SketchCodec.FromState(old);
        SeriesSketchState again = SketchCodec.ToState(loaded);

        Assert.Equal(SketchCodec.FormatVersion, again.Version);
        Assert.Equal(old.Moments, again.Moments);
        Assert.Equal(old.Quantiles, again.Quantiles);
        Assert.Equal(old.Modes, again.Modes);

        // A KLL part that still holds every value gives the log buckets; otherwise there are none.
        // Such a sketch answers as the same inputs do now, unless its modes went on counting where
        // the new rule stops (continuous data past the exact limit).
        bool holdsEvery = old.Quantiles.Levels.Count == 1 && old.Quantiles.Levels[0].Compactions == 0;
        Assert.Equal(holdsEvery, again.LogBuckets is not null);
        if (holdsEvery && old.Modes.Equals(SketchCodec.ToState(rebuilt).Modes))
        {
            Assert.Equal(rebuilt.IsSmall, loaded.IsSmall);
            SummaryComparison.AssertEqual(rebuilt.Summarize(SummaryComparison.Options), loaded.Summarize(SummaryComparison.Options));
        }
    }

    private static (SeriesSketchState Old, SeriesSketch Rebuilt) Parse(string line)
    {
        string[] parts = line.Split(' ');
        string options = parts[1];
        SeriesSketchState old = SeriesSketchState.Parser.ParseFrom(Convert.FromBase64String(parts[4]));
        Assert.Equal(SketchCodec.RankOnlyVersion, old.Version);
        if (parts[0] == "one")
        {
            return (old, SmallFormCases.Build(int.Parse(parts[2], System.Globalization.CultureInfo.InvariantCulture), parts[3], options, seed: 11));
        }

        string[] counts = parts[2].Split('+');
        SeriesSketch a = SmallFormCases.Build(int.Parse(counts[0], System.Globalization.CultureInfo.InvariantCulture), "span", options, seed: 11);
        SeriesSketch b = SmallFormCases.Build(int.Parse(counts[1], System.Globalization.CultureInfo.InvariantCulture), "single", options, seed: 12, offset: 1000);
        a.Merge(b);
        return (old, a);
    }
}
