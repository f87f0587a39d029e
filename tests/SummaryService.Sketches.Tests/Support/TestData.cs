using MathNet.Numerics.Distributions;

namespace SummaryService.Sketches.Tests.Support;

/// <summary>Seeded data sets with the shapes the sketches must handle.</summary>
internal static class TestData
{
    public static double[] Uniform(int n, int seed)
    {
        var rng = new Random(seed);
        return Enumerable.Range(0, n).Select(_ => rng.NextDouble()).ToArray();
    }

    public static double[] Normal(int n, int seed, double mean = 0, double sd = 1)
    {
        var rng = new Random(seed);
        return Enumerable.Range(0, n).Select(_ => MathNet.Numerics.Distributions.Normal.Sample(rng, mean, sd)).ToArray();
    }

    public static double[] LogNormal(int n, int seed, double mu = 3, double sigma = 0.8)
    {
        var rng = new Random(seed);
        return Enumerable.Range(0, n).Select(_ => MathNet.Numerics.Distributions.LogNormal.Sample(rng, mu, sigma)).ToArray();
    }

    /// <summary>Cache hit around 2 ms or miss around 40 ms: two well separated humps.</summary>
    public static double[] Bimodal(int n, int seed)
    {
        var rng = new Random(seed);
        return Enumerable.Range(0, n)
            .Select(_ => rng.NextDouble() < 0.7 ? MathNet.Numerics.Distributions.Normal.Sample(rng, 2, 0.3) : MathNet.Numerics.Distributions.Normal.Sample(rng, 40, 5))
            .ToArray();
    }

    /// <summary>Only 12 distinct values, so most ranks fall inside long runs of ties.</summary>
    public static double[] HeavyTies(int n, int seed)
    {
        var rng = new Random(seed);
        return Enumerable.Range(0, n).Select(_ => (double)Math.Min(11, (int)Exponential.Sample(rng, 0.5))).ToArray();
    }

    public static double[] Sorted(double[] values)
    {
        var copy = (double[])values.Clone();
        Array.Sort(copy);
        return copy;
    }

    public static double[] Reversed(double[] values)
    {
        var copy = Sorted(values);
        Array.Reverse(copy);
        return copy;
    }

    /// <summary>Sorted order folded into alternating ascending and descending runs of 1000.</summary>
    public static double[] ZigZag(double[] values)
    {
        var copy = Sorted(values);
        const int Run = 1000;
        for (int start = Run; start < copy.Length; start += 2 * Run)
        {
            Array.Reverse(copy, start, Math.Min(Run, copy.Length - start));
        }

        return copy;
    }
}
