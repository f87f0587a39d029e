using SummaryService.Sketches.Serialization;
using SummaryService.Sketches.Tests.SerializationTests;

namespace SummaryService.Sketches.Tests.SmallForm;

/// <summary>
/// Bytes written by the code before small sketches existed (Fixtures/sketches-before-small-form.txt,
/// generated from the inputs of <see cref="SmallFormCases"/> at commit c8211ec) must still load, and
/// the same inputs must serialize to the very same bytes now: snapshots and logs on disk keep
/// loading, and a replay rebuilds identical buckets.
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
    public void Same_inputs_serialize_to_the_bytes_the_previous_code_wrote(string line)
    {
        (byte[] old, SeriesSketch rebuilt) = Parse(line);

        Assert.Equal(Convert.ToBase64String(old), Convert.ToBase64String(SketchCodec.Serialize(rebuilt)));
    }

    [Theory]
    [MemberData(nameof(Lines))]
    public void Old_bytes_load_and_answer_like_the_rebuilt_sketch(string line)
    {
        (byte[] old, SeriesSketch rebuilt) = Parse(line);

        SeriesSketch loaded = SketchCodec.Deserialize(old);

        Assert.Equal(old, SketchCodec.Serialize(loaded));
        Assert.Equal(rebuilt.IsSmall, loaded.IsSmall);
        SummaryComparison.AssertEqual(rebuilt.Summarize(SummaryComparison.Options), loaded.Summarize(SummaryComparison.Options));
    }

    private static (byte[] Old, SeriesSketch Rebuilt) Parse(string line)
    {
        string[] parts = line.Split(' ');
        string options = parts[1];
        byte[] old = Convert.FromBase64String(parts[4]);
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
