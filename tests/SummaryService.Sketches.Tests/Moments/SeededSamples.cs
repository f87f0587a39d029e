using System.Collections.Concurrent;
using MathNet.Numerics.Distributions;
using SummaryService.Sketches.Summaries;

namespace SummaryService.Sketches.Tests.MomentsTests;

/// <summary>The families of seeded test data.</summary>
public enum Family
{
    Normal,
    Exponential,
    LogNormal,
    Uniform,
    Laplace,
}

/// <summary>
/// Seeded samples of a million values and the summaries of sketches fed with them in chunks of
/// 1000. Drawing and sketching a million values is the slow part of these tests, so each family is
/// built once per run and shared, read-only, by every test that needs it.
/// </summary>
internal static class SeededSamples
{
    public const int Size = 1_000_000;

    public const int Chunk = 1000;

    private static readonly ConcurrentDictionary<Family, Lazy<double[]>> s_values = new();
    private static readonly ConcurrentDictionary<Family, Lazy<Summary>> s_summaries = new();

    /// <summary>A million draws; do not modify the array.</summary>
    public static double[] Values(Family family) =>
        s_values.GetOrAdd(family, f => new Lazy<double[]>(() => Draw(f))).Value;

    /// <summary>The summary of a <see cref="SeriesSketch"/> fed <see cref="Values"/> by Add(span) in chunks of <see cref="Chunk"/>.</summary>
    public static Summary ChunkedSummary(Family family) =>
        s_summaries.GetOrAdd(family, f => new Lazy<Summary>(() => FedInChunks(Values(f)).Summarize())).Value;

    public static SeriesSketch FedInChunks(ReadOnlySpan<double> values)
    {
        var sketch = new SeriesSketch(seed: 17);
        for (int start = 0; start < values.Length; start += Chunk)
        {
            sketch.Add(values.Slice(start, Math.Min(Chunk, values.Length - start)));
        }

        return sketch;
    }

    private static double[] Draw(Family family)
    {
        // A fixed seed per family; a seeded System.Random keeps its legacy algorithm, so runs repeat.
        var rng = new Random(1000 + (int)family);
        Func<double> sample = family switch
        {
            Family.Normal => () => Normal.Sample(rng, 10.0, 2.0),
            Family.Exponential => () => Exponential.Sample(rng, 0.5),
            Family.LogNormal => () => LogNormal.Sample(rng, 0.0, 1.0),
            Family.Uniform => () => ContinuousUniform.Sample(rng, -1.0, 3.0),
            Family.Laplace => () => Laplace.Sample(rng, 0.0, 1.0),
            _ => throw new ArgumentOutOfRangeException(nameof(family)),
        };
        var values = new double[Size];
        for (int i = 0; i < values.Length; i++)
        {
            values[i] = sample();
        }

        return values;
    }
}
