using Microsoft.Extensions.Logging.Abstractions;
using Microsoft.Extensions.Time.Testing;
using SummaryService.Sketches;
using SummaryService.Sketches.Buckets;
using SummaryService.Sketches.Serialization;
using SummaryService.Sketches.Summaries;
using SummaryService.Store.Persistence;
using SummaryService.Store.Segments;
using SummaryService.TestSupport;

namespace SummaryService.Store.Tests.Segments;

/// <summary>
/// Sketches of explicit-bounds histograms (edge buckets) go through the log, snapshots, rolled
/// tiers and segment files and come back with the same bytes and answers, alone and merged with
/// raw values of the same series.
/// </summary>
public sealed class EdgeBucketPersistenceTests : IDisposable
{
    private static readonly double[] Bounds = [0, 5, 10, 25, 50, 75, 100, 250, 500];
    private readonly TempDirectory _dir = new();
    private readonly FakeTimeProvider _clock = new(DateTimeOffset.FromUnixTimeMilliseconds(1_800_000_000_000));
    private readonly SeriesSelector _selector = new("dock.unload.seconds");

    public void Dispose() => _dir.Dispose();

    [Theory]
    [InlineData(true)]
    [InlineData(false)]
    public async Task Edge_buckets_come_back_the_same_from_segments_snapshot_and_log(bool segments)
    {
        var store = Open(segments);
        long from = Now;
        long count = await FeedAsync(store, seconds: 40);
        var window = new TimeWindow(from - 10_000, Now);
        SeriesSketch before = (await store.ReadAsync(_selector, window, [])).Groups.Single().Sketch;
        Assert.Equal(SketchForm.EdgeBuckets, before.Summarize().Form);
        Assert.Equal(count, before.Count); // every acknowledged value, once (common practice: count conservation)
        await store.DisposeAsync();

        await using var reopened = Open(segments);
        SeriesSketch after = (await reopened.ReadAsync(_selector, window, [])).Groups.Single().Sketch;

        Assert.Equal(SketchCodec.Serialize(before), SketchCodec.Serialize(after));
        Assert.Equal(before.Summarize().Quantiles, after.Summarize().Quantiles);
        if (segments)
        {
            Assert.NotEmpty(Directory.EnumerateFiles(Path.Combine(_dir.Path, "segments"), "*" + SegmentLayout.Extension));
        }
    }

    [Fact]
    public async Task The_log_alone_replays_edge_bucket_uploads()
    {
        var store = Open(segments: false);
        long from = Now;
        await FeedAsync(store, seconds: 6);
        var window = new TimeWindow(from - 10_000, Now);
        byte[] before = SketchCodec.Serialize((await store.ReadAsync(_selector, window, [])).Groups.Single().Sketch);
        await store.CloseWithoutSnapshotAsync();

        await using var reopened = Open(segments: false);

        Assert.True(reopened.Recovery.LogRecordsReplayed > 0);
        Assert.Equal(before, SketchCodec.Serialize((await reopened.ReadAsync(_selector, window, [])).Groups.Single().Sketch));
    }

    private long Now => _clock.GetUtcNow().ToUnixTimeMilliseconds();

    private PersistentSeriesStore Open(bool segments) => PersistentSeriesStore.Open(
        new StoreOptions { Tiers = StoreFixture.SmallTiers, ShardCount = 2 },
        new PersistenceOptions
        {
            DataDirectory = _dir.Path,
            Durability = DurabilityMode.Wal,
            LogSyncInterval = TimeSpan.FromMilliseconds(1),
            Segments = segments ? new SegmentOptions { HotSpan = TimeSpan.FromSeconds(5), SegmentSpan = TimeSpan.FromSeconds(5), BucketsPerSpan = 1 } : null,
        },
        _clock,
        NullLogger.Instance);

    // Each second Otterbyte Parcels' dock exports an explicit-bounds histogram of unload times;
    // every third second a scanner also pushes raw values to the same series. Rolled every five seconds.
    private async Task<long> FeedAsync(PersistentSeriesStore store, int seconds)
    {
        var rng = new Random(2604 + seconds);
        long count = 0;
        for (int second = 0; second < seconds; second++)
        {
            double[] exported = [.. Enumerable.Range(0, 20).Select(_ => Math.Round(rng.NextDouble() * 300, 1))];
            await store.MergeSketchAsync(new UploadedSketch { Metric = "dock.unload.seconds", Sketch = PointOf(exported).ToSketch(SeriesSketchOptions.Default), TimeUnixMs = Now });
            count += exported.Length;
            if (second % 3 == 0)
            {
                double[] pushed = [.. Enumerable.Range(0, 5).Select(_ => Math.Round(rng.NextDouble() * 300, 1))];
                await store.AppendAsync(StoreFixture.Batch("dock.unload.seconds", pushed, Now));
                count += pushed.Length;
            }

            _clock.Advance(TimeSpan.FromSeconds(1));
            if (second % 5 == 4)
            {
                store.Roll();
            }
        }

        return count;
    }

    // Each value in the first bucket whose upper edge is at or above it (OpenTelemetry data model, explicit bounds).
    private static EdgeHistogramPoint PointOf(double[] values)
    {
        var counts = new ulong[Bounds.Length + 1];
        foreach (double v in values)
        {
            counts[Bounds.Count(b => b < v)]++;
        }

        return new EdgeHistogramPoint(Bounds, counts, values.Length, values.Sum(), values.Min(), values.Max());
    }
}
