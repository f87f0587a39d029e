using MathNet.Numerics.Statistics;
using SummaryService.Sketches.Summaries;

namespace SummaryService.Store.Tests;

/// <summary>A window's summary is the summary of exactly the values whose timestamps fall in the interval it reports as covered.</summary>
public class WindowQueryTests
{
    [Fact]
    public void Window_answers_equal_a_brute_force_over_the_covered_values_across_tiers()
    {
        var fixture = new StoreFixture();
        var rng = new Random(51);
        var kept = new List<(long Time, double Value)>();
        long start = fixture.NowMs;

        // Twelve minutes of traffic, with rollup running as the clock moves, plus late values.
        for (int second = 0; second < 720; second++)
        {
            fixture.Clock.Advance(TimeSpan.FromSeconds(1));
            long now = fixture.NowMs;
            var values = Enumerable.Range(0, 50).Select(_ => Math.Exp(rng.NextDouble() * 4)).ToArray();
            long late = now - rng.Next(0, 90_000);
            var times = values.Select((_, i) => i % 5 == 0 ? late : now - rng.Next(0, 1000)).ToArray();
            fixture.Append(new SeriesBatch { Metric = "checkout.latency", Values = values, ValueTimesUnixMs = times });
            kept.AddRange(times.Zip(values));
            if (second % 7 == 0)
            {
                fixture.Store.Roll();
            }
        }

        fixture.Store.Roll();
        long horizon = fixture.NowMs - StoreFixture.SmallTiers[^1].RetentionMs;
        for (int q = 0; q < 200; q++)
        {
            long from = rng.NextInt64(start, fixture.NowMs);
            long to = rng.NextInt64(from + 1, fixture.NowMs + 1);
            var answer = fixture.Query("checkout.latency", from, to);
            var covered = answer.Covered;
            Assert.True(covered.FromUnixMs <= from && covered.ToUnixMs >= to, "covered interval must contain the window");

            // Brute force: every kept value whose timestamp is in the covered interval and still inside retention's buckets.
            var expected = kept.Where(v => covered.Contains(v.Time) && BucketStillKept(v.Time, horizon)).Select(v => v.Value).ToArray();
            if (expected.Length == 0)
            {
                Assert.True(answer.Groups.Count == 0 || answer.Groups[0].Summary.Count == 0);
                continue;
            }

            var summary = Assert.Single(answer.Groups).Summary;
            Assert.Equal(expected.Length, summary.Count);

            // Reference: MathNet.Numerics Statistics.Mean/Variance over the same values.
            Assert.Equal(expected.Mean(), summary.Mean!.Value, 1e-9 * expected.Mean());
            if (expected.Length > 1)
            {
                Assert.Equal(expected.Variance(), summary.Variance!.Value, 1e-8 * expected.Variance());
            }

            Assert.Equal(expected.Min(), summary.Min);
            Assert.Equal(expected.Max(), summary.Max);
            var sorted = expected.Order().ToArray();
            foreach (QuantileEstimate estimate in summary.Quantiles)
            {
                // Hyndman & Fan definition 7 via MathNet; the interval must hold it at 99% confidence,
                // and with 200 windows a miss would be a failure of the bound, not bad luck (Hoeffding bound is conservative).
                double truth = SortedArrayStatistics.QuantileCustom(sorted, estimate.Q, QuantileDefinition.R7);
                Assert.InRange(truth, estimate.Low, estimate.High);
            }
        }
    }

    [Fact]
    public void A_bucket_straddling_the_window_widens_the_covered_interval_to_its_edges()
    {
        var fixture = new StoreFixture();
        long now = fixture.NowMs;
        long bucket = now - (now % 1000);
        fixture.Append(StoreFixture.Batch("queue.depth", [1, 2, 3], bucket + 100));
        fixture.Append(StoreFixture.Batch("queue.depth", [10], bucket + 900));

        var answer = fixture.Query("queue.depth", bucket + 200, bucket + 300);
        Assert.Equal(new TimeWindow(bucket, bucket + 1000), answer.Covered);
        Assert.Equal(4, answer.Groups[0].Summary.Count);
    }

    [Fact]
    public void Group_by_splits_series_and_missing_labels_form_their_own_group()
    {
        var fixture = new StoreFixture();
        fixture.Append(StoreFixture.Batch("api.latency", [1, 2], 0, ("region", "north"), ("route", "/a")));
        fixture.Append(StoreFixture.Batch("api.latency", [3], 0, ("region", "north"), ("route", "/b")));
        fixture.Append(StoreFixture.Batch("api.latency", [4, 5, 6], 0, ("region", "south"), ("route", "/a")));
        fixture.Append(StoreFixture.Batch("api.latency", [7], 0, ("route", "/a")));

        var now = fixture.NowMs;
        var answer = fixture.Query("api.latency", now - 1000, now + 1000, "region");
        Assert.Equal(["", "north", "south"], answer.Groups.Select(g => g.Labels["region"]));
        Assert.Equal([1L, 3L, 3L], answer.Groups.Select(g => g.Summary.Count));
        Assert.Equal([1, 2, 1], answer.Groups.Select(g => g.SeriesMerged));

        var matched = fixture.Store.Summarize(
            new SeriesSelector("api.latency", new Dictionary<string, string> { ["route"] = "/a" }),
            new TimeWindow(now - 1000, now + 1000),
            [],
            new SummaryOptions());
        Assert.Equal(6, Assert.Single(matched.Groups).Summary.Count);
    }

    [Fact]
    public void Rollup_moves_aged_buckets_into_the_next_tier_without_changing_any_answer()
    {
        var fixture = new StoreFixture();
        long from = fixture.NowMs - 60_000;
        for (int i = 0; i < 10; i++)
        {
            fixture.Append(StoreFixture.Batch("disk.io", [i, i + 0.5], fixture.NowMs));
            fixture.Clock.Advance(TimeSpan.FromSeconds(1));
        }

        long to = fixture.NowMs + 1;
        var before = fixture.Query("disk.io", from, to).Groups[0].Summary;
        fixture.Clock.Advance(TimeSpan.FromSeconds(60));
        fixture.Store.Roll();
        var stats = fixture.Store.GetStats();
        Assert.Equal(0, stats.Tiers[0].Buckets);
        Assert.True(stats.Tiers[1].Buckets > 0);

        var after = fixture.Query("disk.io", from, to).Groups[0].Summary;
        Assert.Equal(before.Count, after.Count);
        Assert.Equal(before.Mean, after.Mean);
        Assert.Equal(before.Quantiles, after.Quantiles);
    }

    [Fact]
    public void Cached_blocks_give_way_to_late_values_and_rollup()
    {
        var fixture = new StoreFixture();
        long start = fixture.NowMs - 15_000;
        for (int i = 0; i < 15; i++)
        {
            fixture.Append(StoreFixture.Batch("cache.x", [i, i + 0.25, i + 0.5], start + (i * 1000)));
        }

        var window = (From: start, To: fixture.NowMs);
        var first = fixture.Query("cache.x", window.From, window.To).Groups[0].Summary;
        var warm = fixture.Query("cache.x", window.From, window.To).Groups[0].Summary;
        Assert.Equal(45, first.Count);
        Assert.Equal(first.Quantiles, warm.Quantiles);
        Assert.Equal(first.Mean, warm.Mean);
        Assert.True(fixture.Store.ListSeries().Single().Buckets > 6);

        // A late value inside a cached block must be counted at once.
        fixture.Append(StoreFixture.Batch("cache.x", [100], start + 6500));
        var afterLate = fixture.Query("cache.x", window.From, window.To).Groups[0].Summary;
        Assert.Equal(46, afterLate.Count);
        Assert.Equal(100, afterLate.Max);

        // Rollup moves the buckets into the next tier; the answer keeps every value.
        fixture.Clock.Advance(TimeSpan.FromSeconds(40));
        fixture.Store.Roll();
        var rolled = fixture.Query("cache.x", window.From - 5000, window.To + 5000).Groups[0].Summary;
        Assert.Equal(46, rolled.Count);
        Assert.Equal(afterLate.Mean!.Value, rolled.Mean!.Value, 12);
    }

    // A value survives while the last-tier bucket holding it has not passed the retention horizon.
    private static bool BucketStillKept(long time, long horizon)
    {
        long width = StoreFixture.SmallTiers[^1].WidthMs;
        long bucketStart = time - (((time % width) + width) % width);
        return bucketStart + width > horizon;
    }
}
