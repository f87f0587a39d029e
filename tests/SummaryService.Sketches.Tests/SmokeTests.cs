using SummaryService.Sketches;
using SummaryService.Sketches.Serialization;

namespace SummaryService.Sketches.Tests;

public class SmokeTests
{
    [Fact]
    public void Prints_a_summary()
    {
        var s = new SeriesSketch(seed: 1);
        var rng = new Random(3);
        var values = Enumerable.Range(0, 1_000_000).Select(_ => rng.NextDouble()).ToArray();
        s.Add(values);
        var sum = s.Summarize(new Summaries.SummaryOptions { Histogram = Summaries.HistogramSpec.Automatic(5), RankOf = [0.5] });
        var bytes = SketchCodec.Serialize(s);
        Console.WriteLine($"retained {s.Quantiles.RetainedItems} levels {s.Quantiles.LevelCount} bytes {bytes.Length} eps {sum.RankError}");
        Console.WriteLine(System.Text.Json.JsonSerializer.Serialize(sum, new System.Text.Json.JsonSerializerOptions { WriteIndented = false }));
        var back = SketchCodec.Deserialize(bytes);
        Assert.Equal(bytes, SketchCodec.Serialize(back));
    }
}
