using MathNet.Numerics.Distributions;
using Microsoft.Extensions.Logging;
using Microsoft.Extensions.Time.Testing;
using SummaryService.Sketches.Serialization;
using SummaryService.Store.Persistence;
using SummaryService.Store.Segments;
using SummaryService.TestSupport;

namespace SummaryService.Store.Tests.Segments;

/// <summary>
/// A damaged segment is told by name once, not at every query that meets it, and the spans it cost
/// stay lost across restarts: the covered interval of every later answer keeps starting after them,
/// whether the loss was remembered by a snapshot or found again after a crash.
/// </summary>
public sealed class LostSpanTests : IDisposable
{
    private readonly TempDirectory _dir = new();
    private readonly FakeTimeProvider _clock = new(DateTimeOffset.FromUnixTimeMilliseconds(1_800_000_000_000));
    private readonly SeriesKey _north = new("parcels.scan.latency", [new("depot", "north")]);
    private readonly SeriesSelector _selector = new("parcels.scan.latency", new Dictionary<string, string> { ["depot"] = "north" });
    private readonly WarningLog _log = new();
    private long _begin;

    public void Dispose() => _dir.Dispose();

    private long Now => _clock.GetUtcNow().ToUnixTimeMilliseconds();

    [Fact]
    public async Task A_damaged_segment_is_logged_once_by_name_however_many_queries_meet_it()
    {
        await using var store = await FedStoreAsync();
        string damaged = DamageFirstBlockOfNorth();

        for (int query = 0; query < 3; query++)
        {
            var answer = await store.ReadAsync(_selector, Window, []);
            Assert.True(answer.Covered.FromUnixMs > Window.FromUnixMs, "the covered interval says the damaged buckets are left out");
        }

        Assert.Single(_log.Lines, l => l.Contains(damaged, StringComparison.Ordinal));
    }

    [Fact]
    public async Task A_snapshot_remembers_the_lost_spans_so_a_restart_still_says_so()
    {
        string damaged;
        WindowSketches before;
        await using (var store = await FedStoreAsync())
        {
            damaged = DamageFirstBlockOfNorth();
            before = await store.ReadAsync(_selector, Window, []);
        }

        await using var reopened = Open();
        var after = await reopened.ReadAsync(_selector, Window, []);

        Assert.Equal(before.Covered, after.Covered);
        Assert.Equal(SketchCodec.Serialize(before.Groups.Single().Sketch), SketchCodec.Serialize(after.Groups.Single().Sketch));
        Assert.Contains(reopened.Recovery.Warnings, w => w.Contains(damaged, StringComparison.Ordinal));

        // The loss came back from the manifest, not from reading the block again: nothing new was logged.
        Assert.Single(_log.Lines, l => l.Contains(damaged, StringComparison.Ordinal));
    }

    [Fact]
    public async Task After_a_crash_the_damage_is_found_again_and_the_answer_is_the_same()
    {
        var store = await FedStoreAsync();
        await store.TakeSnapshotAsync();
        DamageFirstBlockOfNorth();
        var before = await store.ReadAsync(_selector, Window, []);
        await store.CloseWithoutSnapshotAsync();

        await using var reopened = Open();
        var after = await reopened.ReadAsync(_selector, Window, []);

        Assert.True(before.Covered.FromUnixMs > Window.FromUnixMs);
        Assert.Equal(before.Covered, after.Covered);
        Assert.Equal(SketchCodec.Serialize(before.Groups.Single().Sketch), SketchCodec.Serialize(after.Groups.Single().Sketch));
    }

    [Fact]
    public async Task A_segment_that_cannot_be_opened_at_start_up_costs_its_whole_range_in_its_shard()
    {
        SegmentInfo cut;
        await using (var store = await FedStoreAsync())
        {
            cut = store.Inner.Segments!.Open().Where(s => s.Tier > 0 && SegmentLayout.OfBlockTier(s.Tier) is null).OrderBy(s => s.FromMs).First();
        }

        string path = Path.Combine(_dir.Path, "segments", cut.FileName);
        using (var file = new FileStream(path, FileMode.Open, FileAccess.Write))
        {
            file.SetLength(file.Length / 2);
        }

        await using var reopened = Open();

        Assert.Contains(reopened.Recovery.Warnings, w => w.Contains(cut.FileName, StringComparison.Ordinal));
        foreach (SeriesInfo series in reopened.Inner.ListSeries())
        {
            var answer = await reopened.ReadAsync(new SeriesSelector(series.Key.Metric, series.Key.Labels.ToDictionary()), new TimeWindow(cut.FromMs - 1, Now), []);
            bool inShard = (int)(series.Key.Hash & (ulong)(reopened.Inner.ShardCount - 1)) == cut.Shard;
            Assert.Equal(inShard, answer.Covered.FromUnixMs >= cut.ToMs);
        }
    }

    private TimeWindow Window => new(_begin - 10_000, Now);

    private static StoreOptions Options => new() { Tiers = StoreFixture.SmallTiers, ShardCount = 2 };

    private PersistentSeriesStore Open() => PersistentSeriesStore.Open(Options, new PersistenceOptions
    {
        DataDirectory = _dir.Path,
        Durability = DurabilityMode.Wal,
        LogSyncInterval = TimeSpan.FromMilliseconds(1),
        Segments = new SegmentOptions { HotSpan = TimeSpan.FromSeconds(5), SegmentSpan = TimeSpan.FromSeconds(5), BucketsPerSpan = 1 },
    }, _clock, _log);

    // Two and a half minutes of one batch a second per depot of Otterbyte Parcels' scanners, rolled every five seconds.
    private async Task<PersistentSeriesStore> FedStoreAsync()
    {
        var store = Open();
        _begin = Now;
        var rng = new Random(2323);
        for (int second = 0; second < 150; second++)
        {
            foreach (string depot in new[] { "north", "south", "harbour", "airport" })
            {
                double[] values = [.. Enumerable.Range(0, 20).Select(_ => LogNormal.Sample(rng, 3.5, 0.5))];
                await store.AppendAsync(StoreFixture.Batch("parcels.scan.latency", values, Now, ("depot", depot)));
            }

            _clock.Advance(TimeSpan.FromSeconds(1));
            if (second % 5 == 4)
            {
                store.Roll();
            }
        }

        return store;
    }

    // Flips a byte inside the earliest block of the north depot's series, in place (the store has the file mapped); returns the file name.
    private string DamageFirstBlockOfNorth()
    {
        foreach (string path in Directory.EnumerateFiles(Path.Combine(_dir.Path, "segments"), "*" + SegmentLayout.Extension).Order(StringComparer.Ordinal))
        {
            SegmentBlock? block;
            using (SegmentReader reader = SegmentReader.Open(path))
            {
                block = reader.Blocks.Where(b => b.Key.Equals(_north)).MinBy(b => b.FirstStartMs);
            }

            if (block is not null)
            {
                using var file = new FileStream(path, FileMode.Open, FileAccess.ReadWrite, FileShare.ReadWrite | FileShare.Delete);
                file.Position = block.Offset + (block.Length / 2);
                int value = file.ReadByte();
                file.Position--;
                file.WriteByte((byte)(value ^ 0x40));
                return Path.GetFileName(path);
            }
        }

        throw new InvalidOperationException("no segment holds the north depot's buckets");
    }

    /// <summary>Keeps the text of every warning.</summary>
    private sealed class WarningLog : ILogger
    {
        public List<string> Lines { get; } = [];

        public IDisposable? BeginScope<TState>(TState state)
            where TState : notnull => null;

        public bool IsEnabled(LogLevel logLevel) => true;

        public void Log<TState>(LogLevel logLevel, EventId eventId, TState state, Exception? exception, Func<TState, Exception?, string> formatter)
        {
            if (logLevel >= LogLevel.Warning)
            {
                lock (Lines)
                {
                    Lines.Add(formatter(state, exception));
                }
            }
        }
    }
}
