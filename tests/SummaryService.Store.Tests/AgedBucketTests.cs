using MathNet.Numerics.Distributions;
using MathNet.Numerics.Statistics;
using Microsoft.Extensions.Logging.Abstractions;
using Microsoft.Extensions.Time.Testing;
using SummaryService.Sketches;
using SummaryService.Sketches.Summaries;
using SummaryService.Store.Persistence;
using SummaryService.TestSupport;

namespace SummaryService.Store.Tests;

/// <summary>
/// Buckets past the first tier are compact — moments, log buckets and exact mode counts, no KLL
/// part and no count-min table — whether they rolled there, took late values, were uploaded or came
/// back from a snapshot; answers read from them say so and still hold the exact quantiles.
/// </summary>
public class AgedBucketTests
{
    [Fact]
    public void Rolled_up_buckets_are_compact_and_their_intervals_hold_the_exact_quantiles()
    {
        var fixture = new StoreFixture();
        var rng = new Random(61);
        long from = fixture.NowMs;
        var all = new List<double>();
        for (int second = 0; second < 10; second++)
        {
            double[] values = Enumerable.Range(0, 3000).Select(_ => LogNormal.Sample(rng, 4, 0.6)).ToArray();
            fixture.Append(StoreFixture.Batch("checkout.latency", values, fixture.NowMs));
            all.AddRange(values);
            fixture.Clock.Advance(TimeSpan.FromSeconds(1));
        }

        long fullBytes = fixture.Store.GetStats().EstimatedBytes;
        fixture.Clock.Advance(TimeSpan.FromSeconds(30));
        fixture.Store.Roll();
        StoreStats stats = fixture.Store.GetStats();
        Assert.Equal(0, stats.Tiers[0].Buckets);

        var summary = fixture.Query("checkout.latency", from, fixture.NowMs).Groups[0].Summary;
        Assert.Equal(SketchForm.LogBuckets, summary.Form);
        Assert.True(stats.EstimatedBytes < fullBytes / 4, $"{stats.EstimatedBytes} B compact against {fullBytes} B full");
        Assert.True(stats.EstimatedBytes / stats.Tiers[1].Buckets <= 2048, $"{stats.EstimatedBytes / stats.Tiers[1].Buckets} B per aged bucket of 6,000 values");
        double[] sorted = [.. all.Order()];
        foreach (QuantileEstimate q in summary.Quantiles)
        {
            // Hyndman & Fan definition 7 via MathNet; the log buckets' interval is certain.
            Assert.InRange(SortedArrayStatistics.QuantileCustom(sorted, q.Q, QuantileDefinition.R7), q.Low, q.High);
        }
    }

    [Fact]
    public async Task Late_values_and_uploads_into_an_aged_tier_stay_compact()
    {
        var fixture = new StoreFixture();
        long old = fixture.NowMs - 60_000;
        var rng = new Random(62);
        fixture.Append(StoreFixture.Batch("queue.wait", Enumerable.Range(0, 1000).Select(_ => rng.NextDouble() * 100).ToArray(), old));
        var upload = new SeriesSketch();
        upload.Add(Enumerable.Range(0, 5000).Select(_ => rng.NextDouble() * 100).ToArray());
        await fixture.Store.MergeSketchAsync(new UploadedSketch { Metric = "queue.wait", Sketch = upload, TimeUnixMs = old + 10 });
        Assert.NotNull(upload.Quantiles);

        var summary = fixture.Query("queue.wait", old - 10_000, old + 10_000).Groups[0].Summary;

        Assert.Equal(6000, summary.Count);
        Assert.Equal(SketchForm.LogBuckets, summary.Form);
    }

    [Fact]
    public async Task Compact_buckets_come_back_compact_from_a_snapshot()
    {
        using var dir = new TempDirectory();
        var clock = new FakeTimeProvider(DateTimeOffset.FromUnixTimeMilliseconds(1_800_000_000_000));
        var options = new StoreOptions { Tiers = StoreFixture.SmallTiers, ShardCount = 4 };
        var persistence = new PersistenceOptions { DataDirectory = dir.Path, Durability = DurabilityMode.Snapshot };
        var store = PersistentSeriesStore.Open(options, persistence, clock, NullLogger.Instance);
        var rng = new Random(63);
        for (int second = 0; second < 40; second++)
        {
            await store.AppendAsync(StoreFixture.Batch("disk.latency", Enumerable.Range(0, 500).Select(_ => LogNormal.Sample(rng, 2, 1)).ToArray(), clock.GetUtcNow().ToUnixTimeMilliseconds()));
            clock.Advance(TimeSpan.FromSeconds(1));
        }

        store.Roll();
        StoreStats before = store.GetStats();
        Assert.True(before.Tiers[1].Buckets > 0);
        await store.DisposeAsync();

        var reopened = PersistentSeriesStore.Open(options, persistence, clock, NullLogger.Instance);
        StoreStats after = reopened.GetStats();

        // Aged buckets come back as they were; first-tier buckets come back trimmed, the open one
        // included, so at most as large.
        Assert.Equal(before.Tiers.Skip(1).Select(t => (t.Buckets, t.EstimatedBytes)), after.Tiers.Skip(1).Select(t => (t.Buckets, t.EstimatedBytes)));
        Assert.Equal(before.Tiers[0].Buckets, after.Tiers[0].Buckets);
        Assert.True(after.Tiers[0].EstimatedBytes <= before.Tiers[0].EstimatedBytes);
        await reopened.DisposeAsync();
    }
}
