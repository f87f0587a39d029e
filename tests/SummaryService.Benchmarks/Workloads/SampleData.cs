namespace SummaryService.Benchmarks.Workloads;

/// <summary>Seeded, reproducible input values.</summary>
public static class SampleData
{
    /// <summary>Values per <c>Add(span)</c> call, as a client batching its samples might send them.</summary>
    public const int SpanLength = 1000;

    /// <summary>Values that make a sketch "full": deep enough in compaction to be at its steady-state size.</summary>
    public const int FullSketchValues = 1_000_000;

    // Weighted so that 200 dominates, as on a healthy service; 16 distinct codes stay far below the exact-mode limit.
    private static readonly (int Code, double CumulativeWeight)[] s_statusCodes = Cumulative(
        (200, 0.80), (201, 0.03), (204, 0.02), (301, 0.01), (302, 0.01), (304, 0.03), (400, 0.02), (401, 0.01),
        (403, 0.01), (404, 0.03), (409, 0.005), (429, 0.005), (500, 0.01), (502, 0.005), (503, 0.01), (504, 0.005));

    /// <summary>Draws <paramref name="count"/> values; the same seed always gives the same values.</summary>
    public static double[] Generate(Distribution distribution, int count, int seed)
    {
        var random = new Random(seed);
        var values = new double[count];
        for (int i = 0; i < values.Length; i++)
        {
            values[i] = distribution switch
            {
                // Median 20 ms with a long right tail, the usual shape of service latency.
                Distribution.LogNormalLatency => Math.Exp(Math.Log(20.0) + (0.8 * StandardNormal(random))),
                Distribution.StatusCodes => StatusCode(random.NextDouble()),
                Distribution.Normal => 100.0 + (15.0 * StandardNormal(random)),
                Distribution.Uniform => random.NextDouble(),
                _ => throw new ArgumentOutOfRangeException(nameof(distribution), distribution, "Unknown distribution."),
            };
        }

        return values;
    }

    // Box–Muller; 1 − u keeps the logarithm's argument away from 0.
    private static double StandardNormal(Random random) =>
        Math.Sqrt(-2.0 * Math.Log(1.0 - random.NextDouble())) * Math.Cos(2.0 * Math.PI * random.NextDouble());

    private static double StatusCode(double u)
    {
        foreach ((int code, double cumulative) in s_statusCodes)
        {
            if (u < cumulative)
            {
                return code;
            }
        }

        return s_statusCodes[^1].Code;
    }

    private static (int Code, double CumulativeWeight)[] Cumulative(params (int Code, double Weight)[] weights)
    {
        double total = weights.Sum(w => w.Weight);
        double running = 0;
        return weights.Select(w => (w.Code, running += w.Weight / total)).ToArray();
    }
}
