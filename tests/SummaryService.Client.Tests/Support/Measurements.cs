using SummaryService.Client;
using SummaryService.Client.Recording;
using SummaryService.Contract.V1;

namespace SummaryService.Client.Tests.Support;

/// <summary>Test values and the recorder settings the tests share.</summary>
internal static class Measurements
{
    /// <summary>
    /// Multiples of 1/8 between 0.125 and 500: every partial sum stays an exact binary fraction, so the
    /// server's sum must equal the plain arithmetic sum bit for bit whatever the order of addition.
    /// </summary>
    public static double[] Eighths(int count, int seed)
    {
        var random = new Random(seed);
        var values = new double[count];
        for (int i = 0; i < count; i++)
        {
            values[i] = random.Next(1, 4001) / 8.0;
        }

        return values;
    }

    /// <summary>Right-skewed latencies (lognormal, median e^3 ≈ 20), like a service's response times.</summary>
    public static double[] Latencies(int count, int seed)
    {
        var random = new Random(seed);
        var normal = new MathNet.Numerics.Distributions.LogNormal(3.0, 0.6, random);
        var values = new double[count];
        for (int i = 0; i < count; i++)
        {
            values[i] = normal.Sample();
        }

        return values;
    }

    /// <summary>Short intervals and back-off so that failures and recoveries happen within a test's time.</summary>
    public static MeasurementRecorderOptions Quick => new()
    {
        MaxBatchValues = 256,
        FlushInterval = TimeSpan.FromMilliseconds(100),
        InitialBackoff = TimeSpan.FromMilliseconds(50),
        MaxBackoff = TimeSpan.FromMilliseconds(400),
        DisposeTimeout = TimeSpan.FromSeconds(20),
    };

    /// <summary>The one summary of a whole metric over the last hour.</summary>
    public static async Task<Summary> SummaryOfAsync(this SummaryClient client, string metric, SummarizeOptions? options = null)
    {
        SummarizeReply reply = await client.SummarizeAsync(Selection.Of(metric), SummaryWindow.Last(TimeSpan.FromHours(1)), options);
        return Assert.Single(reply.Groups).Summary;
    }
}
