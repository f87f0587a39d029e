namespace SummaryService.LoadTest.Workload;

/// <summary>
/// A seeded table of lognormal draws (the usual shape of request latencies: a bulk and a long right
/// tail). Batches read slices of it and scale them, so producing a value costs a load and a multiply
/// instead of a logarithm and an exponential, leaving the cores to the server under test.
/// </summary>
public sealed class LatencyTable
{
    /// <summary>Table length, a power of two so that offsets wrap with a mask.</summary>
    public const int Length = 1 << 20;

    private readonly double[] _values = new double[Length];

    /// <summary>Draws the table: exp(μ + σ·Z), Z standard normal by Box–Muller, from the seed alone.</summary>
    public LatencyTable(ulong seed, double medianMs = 20.0, double sigma = 0.6)
    {
        double mu = Math.Log(medianMs);
        var random = new SeededRandom(seed);
        for (int i = 0; i < Length; i += 2)
        {
            // Box–Muller: two independent standard normals from two uniforms (common practice).
            double u1 = 1.0 - random.NextUnit();
            double u2 = random.NextUnit();
            double radius = Math.Sqrt(-2.0 * Math.Log(u1));
            _values[i] = Math.Exp(mu + (sigma * radius * Math.Cos(2 * Math.PI * u2)));
            _values[i + 1] = Math.Exp(mu + (sigma * radius * Math.Sin(2 * Math.PI * u2)));
        }
    }

    /// <summary>Writes <paramref name="into"/>.Length draws starting at <paramref name="offset"/> (wrapping), each times <paramref name="scale"/>.</summary>
    public void Fill(long offset, double scale, Span<double> into)
    {
        int at = (int)(offset & (Length - 1));
        int done = 0;
        while (done < into.Length)
        {
            int run = Math.Min(into.Length - done, Length - at);
            ReadOnlySpan<double> source = _values.AsSpan(at, run);
            Span<double> target = into.Slice(done, run);
            for (int i = 0; i < run; i++)
            {
                target[i] = source[i] * scale;
            }

            done += run;
            at = 0;
        }
    }
}
