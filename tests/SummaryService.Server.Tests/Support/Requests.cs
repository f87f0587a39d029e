using Google.Protobuf.WellKnownTypes;
using SummaryService.Contract.V1;

namespace SummaryService.Server.Tests.Support;

/// <summary>Short builders for the messages the tests send.</summary>
internal static class Requests
{
    public static Batch Batch(string metric, IEnumerable<double> values, params (string Name, string Value)[] labels)
    {
        var batch = new Batch { Metric = metric };
        batch.Values.AddRange(values);
        foreach (var (name, value) in labels)
        {
            batch.Labels[name] = value;
        }

        return batch;
    }

    public static Contract.V1.Selector Selector(string metric, params (string Name, string Value)[] labels)
    {
        var selector = new Contract.V1.Selector { Metric = metric };
        foreach (var (name, value) in labels)
        {
            selector.LabelEquals[name] = value;
        }

        return selector;
    }

    public static Window Last(TimeSpan span) => new() { Last = Duration.FromTimeSpan(span) };

    public static Window Range(long from, long to) => new() { Range = new Contract.V1.TimeRange { FromUnixMs = from, ToUnixMs = to } };

    public static SummarizeRequest Summarize(string metric, params (string Name, string Value)[] labels) =>
        new() { Selector = Selector(metric, labels), Window = Last(TimeSpan.FromHours(1)) };

    /// <summary>Values from a seeded log-normal: a latency-like, right-skewed shape.</summary>
    public static double[] Latencies(int count, int seed, double mu = 3.0, double sigma = 0.5)
    {
        var random = new System.Random(seed);
        var dist = new MathNet.Numerics.Distributions.LogNormal(mu, sigma, random);
        var values = new double[count];
        for (int i = 0; i < count; i++)
        {
            values[i] = Math.Round(dist.Sample(), 3);
        }

        return values;
    }
}
