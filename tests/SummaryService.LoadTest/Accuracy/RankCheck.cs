using SummaryService.Contract.V1;
using SummaryService.LoadTest.Workload;

namespace SummaryService.LoadTest.Accuracy;

/// <summary>
/// How far an answer's quantiles are from the exact ones, in rank: the values the generator sent into
/// the window are regenerated from the plan and counted against each returned value. A returned
/// value v for probability q is off by the distance from q to [share of values &lt; v, share ≤ v],
/// the normalized rank error the sketch's ε bounds (Karnin, Lang &amp; Liberty 2016).
/// </summary>
public static class RankCheck
{
    /// <summary>Checks a summary of back-fill buckets [firstBucket, endBucket) of the given series.</summary>
    public static RankCheckResult Check(LoadPlan plan, IReadOnlyList<int> series, long firstBucket, long endBucket, Summary summary)
    {
        int m = summary.Quantiles.Count;
        var below = new long[m];
        var atOrBelow = new long[m];
        var lowBelow = new long[m];
        var highAtOrBelow = new long[m];
        var chunk = new double[1 << 16];
        long n = 0;
        foreach (int s in series)
        {
            long first = firstBucket * plan.PerBucket;
            long end = endBucket * plan.PerBucket;
            for (long at = first; at < end; at += chunk.Length)
            {
                Span<double> values = chunk.AsSpan(0, (int)Math.Min(chunk.Length, end - at));
                plan.Values(s, at, values);
                n += values.Length;
                for (int k = 0; k < m; k++)
                {
                    QuantileEstimate estimate = summary.Quantiles[k];
                    Count(values, estimate.Value, ref below[k], ref atOrBelow[k]);
                    long ignored = 0;
                    Count(values, estimate.Low, ref lowBelow[k], ref ignored);
                    Count(values, estimate.High, ref ignored, ref highAtOrBelow[k]);
                }
            }
        }

        double worst = 0;
        int outside = 0;
        for (int k = 0; k < m; k++)
        {
            double q = summary.Quantiles[k].Q;
            worst = Math.Max(worst, Distance(q, (double)below[k] / n, (double)atOrBelow[k] / n));
            // The exact definition-7 quantile lies in [low, high] when at least a share q of the values is
            // ≤ high and at most q is < low; one value of slack covers the interpolation.
            bool holds = highAtOrBelow[k] + 1 >= q * n && lowBelow[k] - 1 <= q * n;
            outside += holds ? 0 : 1;
        }

        return new RankCheckResult(n, (long)summary.Count, worst, summary.RankError, outside, m);
    }

    private static void Count(ReadOnlySpan<double> values, double threshold, ref long below, ref long atOrBelow)
    {
        long lt = 0;
        long le = 0;
        foreach (double v in values)
        {
            lt += v < threshold ? 1 : 0;
            le += v <= threshold ? 1 : 0;
        }

        below += lt;
        atOrBelow += le;
    }

    private static double Distance(double q, double low, double high) => q < low ? low - q : q > high ? q - high : 0;
}

/// <summary>One accuracy check.</summary>
/// <param name="ExactCount">Values the generator sent into the window.</param>
/// <param name="ReportedCount">Count the answer reported (must equal <paramref name="ExactCount"/>).</param>
/// <param name="ObservedRankError">Largest rank distance of a returned quantile from the exact one.</param>
/// <param name="ReportedRankError">The answer's ε at its confidence.</param>
/// <param name="IntervalsMissed">Quantiles whose [low, high] did not hold the exact quantile.</param>
/// <param name="Quantiles">Quantiles checked.</param>
public sealed record RankCheckResult(long ExactCount, long ReportedCount, double ObservedRankError, double ReportedRankError, int IntervalsMissed, int Quantiles);
