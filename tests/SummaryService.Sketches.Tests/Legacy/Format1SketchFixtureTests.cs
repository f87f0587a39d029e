using System.Text.Json;
using SummaryService.Sketches.Serialization;
using SummaryService.Sketches.Tests.Support;

namespace SummaryService.Sketches.Tests.Legacy;

/// <summary>
/// Sketch states written by the code before log buckets (Data/Format1, commit 83a60e4; see the
/// README there) still load, and each answers every question exactly as that code answered it:
/// the recorded summaries are the outside reference.
/// </summary>
public class Format1SketchFixtureTests
{
    private static readonly string Folder = Path.Combine(AppContext.BaseDirectory, "Data", "Format1");

    public static TheoryData<string> Names()
    {
        var names = new TheoryData<string>();
        foreach (string name in Sketches().Keys)
        {
            names.Add(name);
        }

        return names;
    }

    [Fact]
    public void Fixture_holds_the_eight_shapes()
    {
        Assert.Equal(8, Sketches().Count);
        Assert.Equal(Sketches().Keys.Order(), Answers().Keys.Order());
    }

    [Theory]
    [MemberData(nameof(Names))]
    public void A_format_1_sketch_loads_and_answers_as_the_code_that_wrote_it(string name)
    {
        SeriesSketch loaded = SketchCodec.Deserialize(Sketches()[name]);

        JsonElement now = JsonSerializer.SerializeToElement(loaded.Summarize(Format1Options.Recorded));

        JsonSubset.AssertContained(Answers()[name], now);
    }

    private static Dictionary<string, byte[]> Sketches() =>
        File.ReadLines(Path.Combine(Folder, "sketches.txt"))
            .Where(line => !line.StartsWith('#'))
            .Select(line => line.Split(' '))
            .ToDictionary(parts => parts[0], parts => Convert.FromBase64String(parts[1]));

    private static Dictionary<string, JsonElement> Answers() =>
        File.ReadLines(Path.Combine(Folder, "sketch-answers.jsonl"))
            .Select(line => JsonDocument.Parse(line).RootElement)
            .ToDictionary(e => e.GetProperty("Name").GetString()!, e => e.GetProperty("Summary"));
}
