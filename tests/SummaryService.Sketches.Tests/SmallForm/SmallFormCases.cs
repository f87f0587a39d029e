namespace SummaryService.Sketches.Tests.SmallForm;

/// <summary>
/// The inputs shared by the small-form tests and by the fixture of bytes the previous code wrote:
/// value i is ((i · 7919) mod 1000) / 10 + (i mod 7) / 1000 (plain IEEE arithmetic, the same on any
/// machine), fed as one span, one value at a time, or in spans of three.
/// </summary>
internal static class SmallFormCases
{
    public static readonly string[] Feeds = ["span", "single", "chunks3"];

    public static readonly string[] OptionNames = ["default", "res", "limit3"];

    public static SeriesSketchOptions? Options(string name) => name switch
    {
        "default" => null,
        "res" => new SeriesSketchOptions { ModeResolution = 0.5 },
        "limit3" => new SeriesSketchOptions { ModeExactLimit = 3, K = 16 },
        _ => throw new ArgumentOutOfRangeException(nameof(name), name, "unknown option set"),
    };

    public static double Value(int i) => (((i * 7919L) % 1000) / 10.0) + ((i % 7) * 0.001);

    public static double[] Values(int count, int offset)
    {
        var values = new double[count];
        for (int i = 0; i < count; i++)
        {
            values[i] = Value(offset + i);
        }

        return values;
    }

    /// <summary>A sketch that takes the small form while it can.</summary>
    public static SeriesSketch Build(int count, string feed, string options, ulong seed, int offset = 0) =>
        Feed(new SeriesSketch(Options(options), seed), Values(count, offset), feed);

    /// <summary>The same values through the full composite from the first value on, as before small sketches.</summary>
    public static SeriesSketch BuildFull(int count, string feed, string options, ulong seed, int offset = 0)
    {
        var sketch = new SeriesSketch(Options(options), seed);
        _ = sketch.Quantiles; // reading a full part turns the empty sketch into the full form
        Assert.False(sketch.IsSmall);
        return Feed(sketch, Values(count, offset), feed);
    }

    public static SeriesSketch Feed(SeriesSketch sketch, double[] values, string feed)
    {
        switch (feed)
        {
            case "span":
                sketch.Add(values);
                break;
            case "single":
                foreach (double v in values)
                {
                    sketch.Add(v);
                }

                break;
            case "chunks3":
                for (int i = 0; i < values.Length; i += 3)
                {
                    sketch.Add(values.AsSpan(i, Math.Min(3, values.Length - i)));
                }

                break;
            default:
                throw new ArgumentOutOfRangeException(nameof(feed), feed, "unknown feed");
        }

        return sketch;
    }
}
