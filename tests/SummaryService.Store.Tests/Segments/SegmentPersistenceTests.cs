using MathNet.Numerics.Distributions;
using Microsoft.Extensions.Logging.Abstractions;
using Microsoft.Extensions.Time.Testing;
using SummaryService.Sketches.Serialization;
using SummaryService.Store.Persistence;
using SummaryService.Store.Segments;
using SummaryService.TestSupport;

namespace SummaryService.Store.Tests.Segments;

/// <summary>
/// Snapshots hold the head and a manifest of the segment buckets, so a restart brings back the
/// same answers without the snapshot carrying aged buckets; the log still covers everything
/// acknowledged since, including what was moved into segments after the last snapshot.
/// </summary>
public sealed class SegmentPersistenceTests : IDisposable
{
    private readonly TempDirectory _dir = new();
    private readonly FakeTimeProvider _clock = new(DateTimeOffset.FromUnixTimeMilliseconds(1_800_000_000_000));
    private readonly SeriesSelector _selector = new("parcels.scan.latency");

    public void Dispose() => _dir.Dispose();

    private static StoreOptions Options => new() { Tiers = StoreFixture.SmallTiers, ShardCount = 2 };

    private PersistenceOptions Persistence(bool segments = true) => new()
    {
        DataDirectory = _dir.Path,
        Durability = DurabilityMode.Wal,
        LogSyncInterval = TimeSpan.FromMilliseconds(1),
        Segments = segments ? new SegmentOptions { HotSpan = TimeSpan.FromSeconds(5), SegmentSpan = TimeSpan.FromSeconds(5), BucketsPerSpan = 1 } : null,
    };

    private long Now => _clock.GetUtcNow().ToUnixTimeMilliseconds();

    [Fact]
    public async Task A_restart_answers_as_before_from_the_same_segment_files()
    {
        var store = Open();
        long from = Now;
        long appended = await FeedAsync(store, seconds: 150);
        var window = new TimeWindow(from - 10_000, Now);
        byte[] before = SketchCodec.Serialize((await store.ReadAsync(_selector, window, [])).Groups.Single().Sketch);
        var segmentFiles = SegmentFiles();
        Assert.NotEmpty(segmentFiles);
        await store.DisposeAsync();

        await using var reopened = Open();
        var after = await reopened.ReadAsync(_selector, window, []);

        Assert.Equal(before, SketchCodec.Serialize(after.Groups.Single().Sketch));
        Assert.Equal(appended, after.Groups.Single().Sketch.Count); // every acknowledged value, once (common practice: count conservation)
        Assert.Equal(segmentFiles, SegmentFiles());
        Assert.True(reopened.Inner.GetStats().EstimatedBytes < reopened.Inner.GetStats().Buckets * 2048, "aged buckets stayed in their files");

        // New segments continue the numbering after the files already there.
        await FeedAsync(reopened, seconds: 20);
        Assert.Contains(reopened.Inner.Segments!.Open(), s => SegmentLayout.NumberOf(s.FileName) > segmentFiles.Max(SegmentLayout.NumberOf));
    }

    [Fact]
    public async Task After_a_crash_the_log_brings_back_what_moved_into_segments_since_the_last_snapshot()
    {
        var store = Open();
        long from = Now;
        long appended = await FeedAsync(store, seconds: 60);
        await store.TakeSnapshotAsync();
        appended += await FeedAsync(store, seconds: 60);
        await store.CloseWithoutSnapshotAsync();
        store.Inner.Segments!.Dispose();

        await using var reopened = Open();
        var read = await reopened.ReadAsync(_selector, new TimeWindow(from - 10_000, Now), []);

        Assert.Equal(appended, read.Groups.Single().Sketch.Count); // every acknowledged value exactly once (common practice: count conservation)
    }

    [Fact]
    public async Task A_snapshot_carries_the_head_and_not_the_aged_buckets()
    {
        using var plainDir = new TempDirectory();
        var plainClock = new FakeTimeProvider(_clock.GetUtcNow());
        await using (var plain = PersistentSeriesStore.Open(Options, Persistence(segments: false) with { DataDirectory = plainDir.Path }, plainClock, NullLogger.Instance))
        {
            await FeedAsync(plain, seconds: 150, plainClock);
        }

        await using (var segmented = Open())
        {
            await FeedAsync(segmented, seconds: 150);
        }

        long withoutSegments = SnapshotBytes(plainDir.Path);
        long withSegments = SnapshotBytes(_dir.Path);
        Assert.True(withSegments * 2 < withoutSegments, $"snapshot {withSegments} B with segments, {withoutSegments} B without");
    }

    private PersistentSeriesStore Open(bool segments = true) =>
        PersistentSeriesStore.Open(Options, Persistence(segments), _clock, NullLogger.Instance);

    // One batch a second per depot of Otterbyte Parcels' scanners, rolled every five seconds.
    private async Task<long> FeedAsync(PersistentSeriesStore store, int seconds, FakeTimeProvider? clock = null)
    {
        clock ??= _clock;
        var rng = new Random(2302 + seconds);
        long appended = 0;
        for (int second = 0; second < seconds; second++)
        {
            foreach (string depot in new[] { "north", "south" })
            {
                double[] values = [.. Enumerable.Range(0, 30).Select(_ => LogNormal.Sample(rng, 3.5, 0.5))];
                await store.AppendAsync(StoreFixture.Batch("parcels.scan.latency", values, clock.GetUtcNow().ToUnixTimeMilliseconds(), ("depot", depot)));
                appended += values.Length;
            }

            clock.Advance(TimeSpan.FromSeconds(1));
            if (second % 5 == 4)
            {
                store.Roll();
            }
        }

        return appended;
    }

    private string[] SegmentFiles() =>
        [.. Directory.EnumerateFiles(Path.Combine(_dir.Path, "segments"), "*" + SegmentLayout.Extension).Select(Path.GetFileName).Order(StringComparer.Ordinal)!];

    private static long SnapshotBytes(string dataDirectory)
    {
        string newest = SnapshotFiles.List(Path.Combine(dataDirectory, "snapshots"))[0].Path;
        return Directory.EnumerateFiles(newest).Sum(f => new FileInfo(f).Length);
    }
}
