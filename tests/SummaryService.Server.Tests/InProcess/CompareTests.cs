using Grpc.Core;
using SummaryService.Contract.V1;
using SummaryService.Server.Tests.Support;

namespace SummaryService.Server.Tests.InProcess;

public sealed class CompareTests
{
    private const long Hour = 3_600_000;

    [Fact]
    public async Task A_p99_shift_injected_into_the_second_window_is_significant()
    {
        await using var server = new TestServer();
        // Minute-aligned, so neither window widens into the other's buckets.
        long now = DateTimeOffset.UtcNow.ToUnixTimeMilliseconds();
        now -= now % 60_000;
        double[] before = Requests.Latencies(20_000, 51);
        double[] after = Requests.Latencies(20_000, 52);
        var random = new System.Random(53);
        for (int i = 0; i < after.Length; i++)
        {
            // 5% of requests after the change take ten times as long: a tail regression. (At the
            // default k = 200 the rank error is about 1%, so the verdict needs a shift that moves
            // the tail by more than that; a larger Store:SketchK resolves smaller ones.)
            if (random.NextDouble() < 0.05)
            {
                after[i] *= 10;
            }
        }

        await PushSpread(server, "shop.pay.latency", before, now - (2 * Hour));
        await PushSpread(server, "shop.pay.latency", after, now - Hour);
        var reply = await server.Query.CompareAsync(new CompareRequest
        {
            A = new Side { Selector = Requests.Selector("shop.pay.latency"), Window = Requests.Range(now - (2 * Hour), now - Hour) },
            B = new Side { Selector = Requests.Selector("shop.pay.latency"), Window = Requests.Range(now - Hour, now) },
            Quantiles = { 0.99 },
        });

        var p99 = Assert.Single(reply.Shifts);
        Assert.True(p99.Significant, p99.ToString());
        Assert.True(p99.Delta > 0);
        Assert.True(p99.Low > 0);
        Assert.Equal(20_000ul, reply.A.Count);
        Assert.Equal(20_000ul, reply.B.Count);
    }

    [Fact]
    public async Task Two_samples_of_one_distribution_show_no_significant_shift()
    {
        await using var server = new TestServer();
        double[] east = Requests.Latencies(20_000, 61);
        double[] west = Requests.Latencies(20_000, 62);
        await server.Ingest.PushAsync(Requests.Batch("shop.pay.latency", east, ("zone", "east")));
        await server.Ingest.PushAsync(Requests.Batch("shop.pay.latency", west, ("zone", "west")));
        var reply = await server.Query.CompareAsync(new CompareRequest
        {
            A = new Side { Selector = Requests.Selector("shop.pay.latency", ("zone", "east")), Window = Requests.Last(TimeSpan.FromHours(1)) },
            B = new Side { Selector = Requests.Selector("shop.pay.latency", ("zone", "west")), Window = Requests.Last(TimeSpan.FromHours(1)) },
        });

        Assert.Equal([0.5, 0.9, 0.99], reply.Shifts.Select(s => s.Q));
        Assert.All(reply.Shifts, s => Assert.False(s.Significant));
        Assert.All(reply.Shifts, s => Assert.InRange(0.0, s.Low, s.High));
        // Two samples of one distribution still differ a little; the bounds hold the exact two-sample
        // statistic (sup |F_east − F_west| over every value, the definition; common practice).
        Assert.InRange(ExactKs(east, west), reply.KsLow, reply.KsHigh);
        Assert.True(reply.KsHigh < 0.05);
    }

    [Fact]
    public async Task Ks_distance_of_exact_sketches_is_the_two_sample_statistic()
    {
        await using var server = new TestServer();
        double[] a = Requests.Latencies(100, 71);
        double[] b = Requests.Latencies(120, 72, mu: 3.2);
        await server.Ingest.PushAsync(Requests.Batch("shop.ks", a, ("side", "a")));
        await server.Ingest.PushAsync(Requests.Batch("shop.ks", b, ("side", "b")));
        var reply = await server.Query.CompareAsync(new CompareRequest
        {
            A = new Side { Selector = Requests.Selector("shop.ks", ("side", "a")), Window = Requests.Last(TimeSpan.FromHours(1)) },
            B = new Side { Selector = Requests.Selector("shop.ks", ("side", "b")), Window = Requests.Last(TimeSpan.FromHours(1)) },
        });

        // D = sup_x |F_a(x) − F_b(x)| over the empirical CDFs, evaluated at every sample point
        // (two-sample Kolmogorov–Smirnov statistic, NIST/SEMATECH e-Handbook 1.3.5.16, from memory).
        double expected = a.Concat(b).Max(x => Math.Abs((a.Count(v => v <= x) / 100.0) - (b.Count(v => v <= x) / 120.0)));
        Assert.Equal(expected, reply.KsDistance, 1e-12);
        Assert.Equal(expected, reply.KsLow, 1e-12);
        Assert.Equal(expected, reply.KsHigh, 1e-12);
    }

    [Fact]
    public async Task Compare_needs_both_sides_to_match_a_series()
    {
        await using var server = new TestServer();
        await server.Ingest.PushAsync(Requests.Batch("shop.ks", [1, 2]));
        var request = new CompareRequest
        {
            A = new Side { Selector = Requests.Selector("shop.ks"), Window = Requests.Last(TimeSpan.FromHours(1)) },
            B = new Side { Selector = Requests.Selector("shop.missing"), Window = Requests.Last(TimeSpan.FromHours(1)) },
        };
        var ex = await Assert.ThrowsAsync<RpcException>(async () => await server.Query.CompareAsync(request));
        Assert.Equal(StatusCode.NotFound, ex.StatusCode);
        request.B = null;
        Assert.Equal(StatusCode.InvalidArgument, (await Assert.ThrowsAsync<RpcException>(async () => await server.Query.CompareAsync(request))).StatusCode);
    }

    private static async Task PushSpread(TestServer server, string metric, double[] values, long from)
    {
        var batch = Requests.Batch(metric, values);
        batch.ValueTimesUnixMs.AddRange(values.Select((_, i) => from + 1 + (i * (Hour - 2) / values.Length)));
        await server.Ingest.PushAsync(batch);
    }

    private static double ExactKs(double[] a, double[] b)
    {
        double[] sa = [.. a.Order()];
        double[] sb = [.. b.Order()];
        double largest = 0;
        foreach (double x in sa.Concat(sb))
        {
            double fa = UpperBound(sa, x) / (double)sa.Length;
            double fb = UpperBound(sb, x) / (double)sb.Length;
            largest = Math.Max(largest, Math.Abs(fa - fb));
        }

        return largest;
    }

    // Number of entries ≤ x in a sorted array.
    private static int UpperBound(double[] sorted, double x)
    {
        int lo = 0;
        int hi = sorted.Length;
        while (lo < hi)
        {
            int mid = (lo + hi) >>> 1;
            if (sorted[mid] <= x)
            {
                lo = mid + 1;
            }
            else
            {
                hi = mid;
            }
        }

        return lo;
    }
}
