namespace SummaryService.Sketches.Tests.SerializationTests;

/// <summary>
/// Named, seeded series sketches in each state the format must carry. Every builder asserts the
/// state it claims (exact or compacted quantiles, exact or count-min modes), so a case cannot
/// silently stop covering what its name says.
/// </summary>
internal static class SketchCases
{
    public static readonly string[] Names =
    [
        "empty",
        "one-value",
        "ten-values",
        "exact-200",
        "compacted-100000",
        "small-k-many-levels",
        "modes-exact-phase",
        "modes-count-min-phase",
        "resolution-exact-phase",
        "resolution-count-min-phase",
        "merged-exact-parts",
        "merged-compacted-parts",
        "merged-into-empty",
    ];

    public static SeriesSketch Build(string name)
    {
        switch (name)
        {
            case "empty":
                return new SeriesSketch(seed: 1);

            case "one-value":
                return Fed(new SeriesSketch(seed: 2), [42.5]);

            case "ten-values":
                return Fed(new SeriesSketch(seed: 3), Uniform(10, seed: 3));

            case "exact-200":
                {
                    SeriesSketch s = Fed(new SeriesSketch(seed: 4), Uniform(200, seed: 4));
                    Assert.True(s.Quantiles!.IsExact, "200 values fit the top level of k = 200 uncompacted");
                    return s;
                }

            case "compacted-100000":
                {
                    SeriesSketch s = Fed(new SeriesSketch(seed: 5), Uniform(100_000, seed: 5));
                    Assert.False(s.Quantiles!.IsExact);
                    Assert.False(s.Modes.IsExact);
                    return s;
                }

            case "small-k-many-levels":
                {
                    SeriesSketch s = Fed(new SeriesSketch(new SeriesSketchOptions { K = 8 }, seed: 6), Uniform(20_000, seed: 6));
                    Assert.True(s.Quantiles!.LevelCount >= 8);
                    return s;
                }

            case "modes-exact-phase":
                {
                    // 5000 values on 50 distinct integers: within the exact limit of 128 keys.
                    SeriesSketch s = Fed(new SeriesSketch(seed: 7), Integers(5000, 50, seed: 7));
                    Assert.True(s.Modes.IsExact);
                    Assert.False(s.Quantiles!.IsExact);
                    return s;
                }

            case "modes-count-min-phase":
                {
                    SeriesSketch s = Fed(new SeriesSketch(seed: 8), Integers(20_000, 1000, seed: 8));
                    Assert.False(s.Modes.IsExact);
                    return s;
                }

            case "resolution-exact-phase":
                {
                    var options = new SeriesSketchOptions { ModeResolution = 0.5 };
                    SeriesSketch s = Fed(new SeriesSketch(options, seed: 9), Uniform(3000, seed: 9));
                    Assert.True(s.Modes.IsExact, "values in [−10, 40) fall in about 100 bins of width 0.5");
                    return s;
                }

            case "resolution-count-min-phase":
                {
                    var options = new SeriesSketchOptions { ModeResolution = 0.01, ModeWidth = 64, ModeDepth = 3, ModeCandidates = 8 };
                    SeriesSketch s = Fed(new SeriesSketch(options, seed: 10), Uniform(3000, seed: 10));
                    Assert.False(s.Modes.IsExact);
                    return s;
                }

            case "merged-exact-parts":
                {
                    SeriesSketch s = Fed(new SeriesSketch(seed: 11), Integers(60, 30, seed: 11));
                    s.Merge(Fed(new SeriesSketch(seed: 12), Integers(70, 30, seed: 12)));
                    s.Merge(new SeriesSketch(seed: 13));
                    Assert.True(s.Quantiles!.IsExact);
                    return s;
                }

            case "merged-compacted-parts":
                {
                    SeriesSketch s = Fed(new SeriesSketch(seed: 14), Uniform(30_000, seed: 14));
                    s.Merge(Fed(new SeriesSketch(seed: 15), Integers(20_000, 40, seed: 15)));
                    s.Merge(Fed(new SeriesSketch(seed: 16), Uniform(7, seed: 16)));
                    Assert.False(s.Quantiles!.IsExact);
                    Assert.False(s.Modes.IsExact);
                    return s;
                }

            case "merged-into-empty":
                {
                    var s = new SeriesSketch(seed: 17);
                    s.Merge(Fed(new SeriesSketch(seed: 18), Uniform(5000, seed: 18)));
                    return s;
                }

            default:
                throw new ArgumentOutOfRangeException(nameof(name), name, "unknown case");
        }
    }

    /// <summary>Mode settings of a case, so that a continuation stream can be merged into it.</summary>
    public static SeriesSketchOptions OptionsOf(string name) => name switch
    {
        "small-k-many-levels" => new SeriesSketchOptions { K = 8 },
        "resolution-exact-phase" => new SeriesSketchOptions { ModeResolution = 0.5 },
        "resolution-count-min-phase" => new SeriesSketchOptions { ModeResolution = 0.01, ModeWidth = 64, ModeDepth = 3, ModeCandidates = 8 },
        _ => SeriesSketchOptions.Default,
    };

    /// <summary>Values in [−10, 40) with two decimals' worth of distinct values.</summary>
    public static double[] Uniform(int n, int seed)
    {
        var rng = new Random(seed);
        return Enumerable.Range(0, n).Select(_ => -10 + (50 * rng.NextDouble())).ToArray();
    }

    /// <summary>Integers 0..distinct−1, skewed towards small ones so that the modes are clear.</summary>
    public static double[] Integers(int n, int distinct, int seed)
    {
        var rng = new Random(seed);
        return Enumerable.Range(0, n).Select(_ => Math.Floor(distinct * Math.Pow(rng.NextDouble(), 1.5))).ToArray();
    }

    private static SeriesSketch Fed(SeriesSketch sketch, double[] values)
    {
        // Mostly spans, with a tail one value at a time, as a service would see.
        int spanPart = values.Length * 3 / 4;
        sketch.Add(values.AsSpan(0, spanPart));
        foreach (double v in values.AsSpan(spanPart))
        {
            sketch.Add(v);
        }

        return sketch;
    }
}
