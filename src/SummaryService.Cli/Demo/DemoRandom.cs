namespace SummaryService.Cli.Demo;

/// <summary>
/// The demo's seeded random source and the few shapes it draws from, so the same seed gives the same
/// values on every run (only their timestamps follow the clock).
/// </summary>
public sealed class DemoRandom(int seed)
{
    private readonly Random _random = new(seed);

    /// <summary>Uniform in [0, 1).</summary>
    public double Uniform() => _random.NextDouble();

    /// <summary>Standard normal by the Box–Muller transform.</summary>
    public double StandardNormal()
    {
        double u1 = 1.0 - _random.NextDouble();
        double u2 = _random.NextDouble();
        return Math.Sqrt(-2.0 * Math.Log(u1)) * Math.Cos(2.0 * Math.PI * u2);
    }

    /// <summary>Normal with the given mean and standard deviation.</summary>
    public double Normal(double mean, double stddev) => mean + (stddev * StandardNormal());

    /// <summary>Lognormal whose median is <paramref name="median"/> and whose log has standard deviation <paramref name="sigma"/>.</summary>
    public double LogNormal(double median, double sigma) => median * Math.Exp(sigma * StandardNormal());

    /// <summary>Poisson by Knuth's multiplication method (fine for the small means of queue depths).</summary>
    public int Poisson(double mean)
    {
        double limit = Math.Exp(-mean);
        double product = _random.NextDouble();
        int k = 0;
        while (product > limit && k < 1000)
        {
            k++;
            product *= _random.NextDouble();
        }

        return k;
    }

    /// <summary>Index into <paramref name="weights"/> drawn in proportion to the weights (which sum to 1).</summary>
    public int Pick(ReadOnlySpan<double> weights)
    {
        double u = _random.NextDouble();
        for (int i = 0; i < weights.Length - 1; i++)
        {
            u -= weights[i];
            if (u < 0)
            {
                return i;
            }
        }

        return weights.Length - 1;
    }
}
