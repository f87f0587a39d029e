using System.Globalization;

namespace SummaryService.Cli.Tests.Support;

/// <summary>Seeded test values and their text forms.</summary>
public static class Samples
{
    /// <summary>Lognormal latencies (median e^mu), rounded to 0.001 so their text form is exact.</summary>
    public static double[] Latencies(int count, int seed, double mu = 3.0, double sigma = 0.5)
    {
        var random = new Random(seed);
        var values = new double[count];
        for (int i = 0; i < count; i++)
        {
            double normal = Math.Sqrt(-2 * Math.Log(1 - random.NextDouble())) * Math.Cos(2 * Math.PI * random.NextDouble());
            values[i] = Math.Round(Math.Exp(mu + (sigma * normal)), 3);
        }

        return values;
    }

    /// <summary>Invariant round-trip text of a value.</summary>
    public static string Text(double value) => value.ToString("R", CultureInfo.InvariantCulture);

    /// <summary>ISO 8601 UTC of a Unix millisecond instant.</summary>
    public static string Iso(long unixMs) => DateTimeOffset.FromUnixTimeMilliseconds(unixMs).UtcDateTime.ToString("yyyy-MM-dd'T'HH:mm:ss.fff'Z'", CultureInfo.InvariantCulture);
}
