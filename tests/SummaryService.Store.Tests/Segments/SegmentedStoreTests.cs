using MathNet.Numerics.Distributions;
using Microsoft.Extensions.Time.Testing;
using SummaryService.Sketches.Serialization;
using SummaryService.Sketches.Summaries;
using SummaryService.Store.Persistence;
using SummaryService.Store.Segments;
using SummaryService.TestSupport;

namespace SummaryService.Store.Tests.Segments;

/// <summary>
/// A store whose aged buckets live in segment files answers exactly as the same store keeping
/// everything in memory: the reference is that store fed the same batches at the same clock times,
/// and "exactly" means the merged sketches are the same bytes, so every figure and every interval
/// is the same. A damaged segment is left out and the covered interval starts after it.
/// </summary>
public class SegmentedStoreTests : IDisposable
{
    private static readonly string[] Depots = ["north", "south", "harbour"];
    private readonly TempDirectory _dir = new();
    private readonly FakeTimeProvider _clock = new(DateTimeOffset.FromUnixTimeMilliseconds(1_800_000_000_000));
    private readonly ShardedSeriesStore _segmented;
    private readonly ShardedSeriesStore _inMemory;
    private readonly SegmentShelf _shelf;
    private readonly long _begin;

    public SegmentedStoreTests()
        : this(bucketsPerSpan: 1)
    {
    }

    /// <summary>With <paramref name="bucketsPerSpan"/> of 6 or more, segments carry pre-merged blocks (see <see cref="PremergedBlockTests"/>).</summary>
    protected SegmentedStoreTests(int bucketsPerSpan)
    {
        var options = new StoreOptions { Tiers = StoreFixture.SmallTiers, ShardCount = 2 };
        _segmented = new ShardedSeriesStore(options, _clock);
        _inMemory = new ShardedSeriesStore(options, _clock);
        _shelf = new SegmentShelf(_dir.Path, new SegmentOptions { HotSpan = TimeSpan.FromSeconds(5), SegmentSpan = TimeSpan.FromSeconds(5), BucketsPerSpan = bucketsPerSpan }, new LocalDataFiles());
        _segmented.Segments = _shelf;
        _begin = _clock.GetUtcNow().ToUnixTimeMilliseconds();
    }

    public void Dispose()
    {
        _shelf.Dispose();
        _dir.Dispose();
        GC.SuppressFinalize(this);
    }

    protected ShardedSeriesStore Segmented => _segmented;

    private protected SegmentShelf Shelf => _shelf;

    protected long Begin => _begin;

    protected long Now => _clock.GetUtcNow().ToUnixTimeMilliseconds();

    [Fact]
    public async Task Windows_over_head_overlay_and_segments_answer_as_the_all_in_memory_store()
    {
        FeedThreeMinutes(lateEvery: 7);
        Assert.NotEmpty(_shelf.Open());
        Assert.True(_segmented.GetStats().EstimatedBytes < _inMemory.GetStats().EstimatedBytes / 2, "most bytes left memory");
        Assert.Equal(_inMemory.GetStats().Buckets, _segmented.GetStats().Buckets);

        int windows = 0;
        for (long from = _begin - 30_000; from < Now; from += 7_000)
        {
            foreach (long length in new long[] { 3_000, 17_000, 45_000, 120_000, Now - from })
            {
                var window = new TimeWindow(from, Math.Min(from + length, Now + 1));
                foreach (string[] groupBy in new[] { Array.Empty<string>(), ["depot"] })
                {
                    await AssertSameAsync(window, groupBy);
                    windows++;
                }
            }
        }

        Assert.True(windows > 100, $"{windows} windows");
    }

    [Fact]
    public async Task Steps_across_the_whole_span_answer_as_the_all_in_memory_store()
    {
        FeedThreeMinutes(lateEvery: 11);
        var window = new TimeWindow(_begin - 30_000, Now);
        var selector = new SeriesSelector("parcels.scan.latency");

        var expected = await _inMemory.ReadStepsAsync(selector, window, 10_000, ["depot"]);
        var actual = await _segmented.ReadStepsAsync(selector, window, 10_000, ["depot"]);

        Assert.Equal(expected.Count, actual.Count);
        for (int i = 0; i < expected.Count; i++)
        {
            AssertSame(expected[i], actual[i]);
        }
    }

    [Fact]
    public void Summaries_read_from_segments_carry_the_same_figures_and_intervals()
    {
        FeedThreeMinutes(lateEvery: 5);
        var window = new TimeWindow(_begin, Now);
        var options = new SummaryOptions();

        var expected = _inMemory.Summarize(new SeriesSelector("parcels.scan.latency"), window, [], options).Groups.Single().Summary;
        var actual = _segmented.Summarize(new SeriesSelector("parcels.scan.latency"), window, [], options).Groups.Single().Summary;

        Assert.Equal(expected.Count, actual.Count);
        Assert.Equal(expected.Mean, actual.Mean);
        Assert.Equal(expected.Variance, actual.Variance);
        Assert.Equal(expected.Quantiles, actual.Quantiles);
    }

    [Fact]
    public void Retention_and_rollup_retire_whole_segment_files()
    {
        FeedThreeMinutes(lateEvery: 0);
        Assert.NotEmpty(_shelf.Open());

        // Past the last tier's retention every bucket is dropped, and with them every file.
        _clock.Advance(TimeSpan.FromMinutes(11));
        _segmented.Roll();
        _segmented.MoveAgedBuckets();

        Assert.Empty(_shelf.Open());
        Assert.Empty(Directory.EnumerateFiles(_dir.Path));
        Assert.Empty(_segmented.ListSeries());
    }

    [Fact]
    public async Task A_damaged_segment_is_left_out_and_the_covered_interval_starts_after_it()
    {
        FeedThreeMinutes(lateEvery: 0);
        var key = new SeriesKey("parcels.scan.latency", [new("depot", "north")]);
        var (path, block) = FirstBlockOf(key);
        FlipByteInside(path, block);

        // Pre-merged blocks would answer without the damaged buckets: damaged too, they fall back to them.
        foreach (SegmentInfo info in _shelf.Open().Where(i => SegmentLayout.OfBlockTier(i.Tier) is not null))
        {
            string blockPath = Path.Combine(_dir.Path, info.FileName);
            using SegmentReader reader = SegmentReader.Open(blockPath);
            foreach (SegmentBlock premerged in reader.Blocks.Where(b => b.Key.Equals(key)))
            {
                FlipByteInside(blockPath, premerged);
            }
        }

        var selector = new SeriesSelector("parcels.scan.latency", new Dictionary<string, string> { ["depot"] = "north" });
        var window = new TimeWindow(_begin - 30_000, Now);
        WindowSketches damaged = await _segmented.ReadAsync(selector, window, []);

        Assert.True(damaged.Covered.FromUnixMs > block.LastStartMs, $"covered from {damaged.Covered.FromUnixMs}, damaged block's last bucket starts at {block.LastStartMs}");
        Assert.Contains(_segmented.ListSeries().Single(s => s.Key.Equals(key)).Key.Metric, key.Metric, StringComparison.Ordinal);

        // What is left equals the all-in-memory answer over the interval said to be covered.
        WindowSketches reference = await _inMemory.ReadAsync(selector, damaged.Covered, []);
        AssertSame(reference, damaged);
        Assert.True(reference.Groups.Single().Sketch.Count < (await _inMemory.ReadAsync(selector, window, [])).Groups.Single().Sketch.Count);
    }

    /// <summary>
    /// Three minutes of one batch per second per series (log-normal latencies, Otterbyte Parcels'
    /// scanners), rolled every five seconds; every <paramref name="lateEvery"/> seconds a batch lands
    /// a minute late, in a bucket that by then lives in a segment.
    /// </summary>
    protected void FeedThreeMinutes(int lateEvery)
    {
        var rng = new Random(2301);
        for (int second = 0; second < 180; second++)
        {
            foreach (string depot in Depots)
            {
                double[] values = [.. Enumerable.Range(0, 40).Select(_ => LogNormal.Sample(rng, 3.5, 0.5))];
                Append(StoreFixture.Batch("parcels.scan.latency", values, Now, ("depot", depot)));
            }

            if (lateEvery > 0 && second > 60 && second % lateEvery == 0)
            {
                Append(StoreFixture.Batch("parcels.scan.latency", [rng.NextDouble() * 90, rng.NextDouble() * 90], Now - 60_000, ("depot", "south")));
            }

            _clock.Advance(TimeSpan.FromSeconds(1));
            if (second % 5 == 4)
            {
                _inMemory.Roll();
                _segmented.Roll();
                _segmented.MoveAgedBuckets();
            }
        }
    }

    protected void Append(SeriesBatch batch)
    {
        _inMemory.AppendAsync(batch).AsTask().GetAwaiter().GetResult();
        _segmented.AppendAsync(batch).AsTask().GetAwaiter().GetResult();
    }

    protected async Task AssertSameAsync(TimeWindow window, string[] groupBy)
    {
        var selector = new SeriesSelector("parcels.scan.latency");
        AssertSame(await _inMemory.ReadAsync(selector, window, groupBy), await _segmented.ReadAsync(selector, window, groupBy));
    }

    private static void AssertSame(WindowSketches expected, WindowSketches actual)
    {
        Assert.Equal(expected.Covered, actual.Covered);
        Assert.Equal(expected.Groups.Count, actual.Groups.Count);
        for (int g = 0; g < expected.Groups.Count; g++)
        {
            Assert.Equal(expected.Groups[g].Labels, actual.Groups[g].Labels);
            Assert.Equal(expected.Groups[g].SeriesMerged, actual.Groups[g].SeriesMerged);
            Assert.Equal(SketchCodec.Serialize(expected.Groups[g].Sketch), SketchCodec.Serialize(actual.Groups[g].Sketch));
        }
    }

    private (string Path, SegmentBlock Block) FirstBlockOf(SeriesKey key)
    {
        foreach (SegmentInfo info in _shelf.Open().Where(i => i.Tier == 1).OrderBy(i => i.FromMs))
        {
            string path = Path.Combine(_dir.Path, info.FileName);
            using SegmentReader reader = SegmentReader.Open(path);
            if (reader.Blocks.FirstOrDefault(b => b.Key.Equals(key)) is { } block)
            {
                return (path, block);
            }
        }

        throw new InvalidOperationException($"no tier-1 segment holds {key}");
    }

    // Written in place, not by rewriting the file: the store has it mapped.
    private static void FlipByteInside(string path, SegmentBlock block)
    {
        using var file = new FileStream(path, FileMode.Open, FileAccess.ReadWrite, FileShare.ReadWrite | FileShare.Delete);
        file.Position = block.Offset + (block.Length / 2);
        int value = file.ReadByte();
        file.Position--;
        file.WriteByte((byte)(value ^ 0x40));
    }
}
