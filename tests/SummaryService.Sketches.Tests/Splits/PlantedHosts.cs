using SummaryService.Sketches.Summaries;
using SummaryService.Sketches.Tests.Support;

namespace SummaryService.Sketches.Tests.Splits;

/// <summary>
/// A fleet of hosts whose latencies come from one lognormal distribution (median 100 ms, log-sd
/// 0.5), except the planted ones whose slowest 5% take 1.5 times as long: their tail is 1.5×
/// heavier while everything below the base's p95 is untouched.
/// </summary>
internal static class PlantedHosts
{
    public const int PerHost = 4000;

    /// <summary>The base distribution's p95: exp(ln 100 + 0.5·z(0.95)), z(0.95) = 1.644854 (NIST/SEMATECH e-Handbook normal table).</summary>
    public static readonly double TailStart = Math.Exp(Math.Log(100) + (0.5 * 1.644854));

    public static double[] Values(int trial, int host, bool heavy)
    {
        double[] values = TestData.LogNormal(PerHost, seed: (trial * 1000) + host, mu: Math.Log(100), sigma: 0.5);
        return heavy ? [.. values.Select(v => v > TailStart ? v * 1.5 : v)] : values;
    }

    /// <summary>Hosts host-00 … host-(n−1); the planted ones are named by index.</summary>
    public static (StandoutInput[] Groups, string[] Heavy) Fleet(int trial, int hosts, params int[] heavy)
    {
        var groups = new StandoutInput[hosts];
        for (int h = 0; h < hosts; h++)
        {
            var sketch = new SeriesSketch(seed: (ulong)((trial * 1000) + h + 1));
            sketch.Add(Values(trial, h, heavy.Contains(h)));
            groups[h] = new StandoutInput(Name(h), sketch, 1);
        }

        return (groups, [.. heavy.Select(Name)]);
    }

    public static string Name(int host) => $"host-{host:D2}";
}
