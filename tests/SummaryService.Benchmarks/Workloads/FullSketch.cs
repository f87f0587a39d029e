using SummaryService.Sketches;

namespace SummaryService.Benchmarks.Workloads;

/// <summary>Default-option sketches filled the way a client would fill them: in spans of <see cref="SampleData.SpanLength"/>.</summary>
public static class FullSketch
{
    /// <summary>A default sketch holding <paramref name="valueCount"/> values of <paramref name="distribution"/>.</summary>
    /// <param name="distribution">Shape of the data.</param>
    /// <param name="dataSeed">Seed of the values.</param>
    /// <param name="sketchSeed">Seed of the compaction coin, fixed so that every run compacts identically.</param>
    /// <param name="valueCount">Values folded in.</param>
    public static SeriesSketch Build(Distribution distribution, int dataSeed, ulong sketchSeed, int valueCount = SampleData.FullSketchValues)
    {
        var sketch = new SeriesSketch(seed: sketchSeed);
        FeedInSpans(sketch, SampleData.Generate(distribution, valueCount, dataSeed));
        return sketch;
    }

    /// <summary>Folds <paramref name="values"/> into <paramref name="sketch"/> span by span.</summary>
    public static void FeedInSpans(SeriesSketch sketch, ReadOnlySpan<double> values)
    {
        for (int start = 0; start < values.Length; start += SampleData.SpanLength)
        {
            sketch.Add(values.Slice(start, Math.Min(SampleData.SpanLength, values.Length - start)));
        }
    }
}
