namespace SummaryService.LoadTest.Driving;

/// <summary>Latency samples of one kind, in milliseconds; each task keeps its own and they are combined at the end.</summary>
public sealed class LatencySamples
{
    private readonly List<double> _ms = [];

    /// <summary>Samples held.</summary>
    public int Count => _ms.Count;

    /// <summary>Adds one sample.</summary>
    public void Add(double milliseconds) => _ms.Add(milliseconds);

    /// <summary>All samples of several recorders.</summary>
    public static LatencySamples Combine(IEnumerable<LatencySamples> parts)
    {
        var all = new LatencySamples();
        foreach (LatencySamples part in parts)
        {
            all._ms.AddRange(part._ms);
        }

        return all;
    }

    /// <summary>p50, p99 and the largest sample; nearest-rank percentiles (common practice). Null without samples.</summary>
    public LatencySummary? Summarize()
    {
        if (_ms.Count == 0)
        {
            return null;
        }

        double[] sorted = [.. _ms];
        Array.Sort(sorted);
        return new LatencySummary(sorted.Length, NearestRank(sorted, 0.50), NearestRank(sorted, 0.99), sorted[^1]);
    }

    private static double NearestRank(double[] sorted, double p) => sorted[Math.Clamp((int)Math.Ceiling(p * sorted.Length) - 1, 0, sorted.Length - 1)];
}

/// <summary>Percentiles of a set of latencies, in milliseconds.</summary>
public sealed record LatencySummary(int Count, double P50Ms, double P99Ms, double MaxMs);
