using System.Text.Json;
using Microsoft.Extensions.Logging.Abstractions;
using Microsoft.Extensions.Time.Testing;
using SummaryService.Sketches.Summaries;
using SummaryService.Store.Persistence;
using SummaryService.TestSupport;

namespace SummaryService.Store.Tests;

public class PersistenceTests
{
    private static readonly SummaryOptions Everything = new()
    {
        Quantiles = [0, 0.1, 0.5, 0.9, 0.99, 1],
        RankOf = [10, 50],
        Histogram = HistogramSpec.Automatic(8),
    };

    [Fact]
    public async Task Every_answer_is_identical_after_a_restart_from_a_snapshot()
    {
        using var dir = new TempDirectory();
        var clock = new FakeTimeProvider(DateTimeOffset.FromUnixTimeMilliseconds(1_800_000_000_000));
        var persistence = new PersistenceOptions { DataDirectory = dir.Path, Durability = DurabilityMode.Snapshot };
        var store = PersistentSeriesStore.Open(Options(), persistence, clock, NullLogger.Instance);
        await FillAsync(store, clock, seed: 1);
        string before = Answers(store, clock);
        await store.DisposeAsync();

        var reopened = PersistentSeriesStore.Open(Options(), persistence, clock, NullLogger.Instance);
        Assert.Equal(before, Answers(reopened, clock));
        Assert.NotNull(reopened.Recovery.SnapshotGeneration);
        Assert.Equal(0, reopened.Recovery.LogRecordsRead);
        await reopened.DisposeAsync();
    }

    [Fact]
    public async Task The_log_alone_restores_every_acknowledged_batch()
    {
        using var dir = new TempDirectory();
        var clock = new FakeTimeProvider(DateTimeOffset.FromUnixTimeMilliseconds(1_800_000_000_000));
        var persistence = new PersistenceOptions { DataDirectory = dir.Path };
        var store = PersistentSeriesStore.Open(Options(), persistence, clock, NullLogger.Instance);
        await FillAsync(store, clock, seed: 2);
        string before = Answers(store, clock);
        await store.CloseWithoutSnapshotAsync();

        var reopened = PersistentSeriesStore.Open(Options(), persistence, clock, NullLogger.Instance);
        Assert.Null(reopened.Recovery.SnapshotGeneration);
        Assert.True(reopened.Recovery.LogRecordsReplayed > 0);
        Assert.Equal(before, Answers(reopened, clock));
        await reopened.DisposeAsync();
    }

    [Fact]
    public async Task Snapshot_then_log_replay_applies_each_batch_once()
    {
        using var dir = new TempDirectory();
        var clock = new FakeTimeProvider(DateTimeOffset.FromUnixTimeMilliseconds(1_800_000_000_000));
        var persistence = new PersistenceOptions { DataDirectory = dir.Path };
        var store = PersistentSeriesStore.Open(Options(), persistence, clock, NullLogger.Instance);
        await FillAsync(store, clock, seed: 3);
        await store.TakeSnapshotAsync();
        await FillAsync(store, clock, seed: 4);
        string before = Answers(store, clock);
        await store.CloseWithoutSnapshotAsync();

        var reopened = PersistentSeriesStore.Open(Options(), persistence, clock, NullLogger.Instance);
        Assert.NotNull(reopened.Recovery.SnapshotGeneration);
        Assert.True(reopened.Recovery.LogRecordsReplayed > 0);
        Assert.Equal(before, Answers(reopened, clock));

        // A producer's sequence applied before the restart is still recognised afterwards.
        var repeat = new SeriesBatch { Metric = "svc.latency", Values = new double[] { 1 }, Producer = "p", Sequence = 1 };
        Assert.True((await reopened.AppendAsync(repeat)).Duplicate);
        await reopened.DisposeAsync();
    }

    [Fact]
    public async Task A_damaged_newest_snapshot_falls_back_to_the_previous_one_and_loses_nothing()
    {
        using var dir = new TempDirectory();
        var clock = new FakeTimeProvider(DateTimeOffset.FromUnixTimeMilliseconds(1_800_000_000_000));
        var persistence = new PersistenceOptions { DataDirectory = dir.Path };
        var store = PersistentSeriesStore.Open(Options(), persistence, clock, NullLogger.Instance);
        await FillAsync(store, clock, seed: 5);
        await store.TakeSnapshotAsync();
        await FillAsync(store, clock, seed: 6);
        var newest = await store.TakeSnapshotAsync();
        await FillAsync(store, clock, seed: 7);
        string before = Answers(store, clock);
        await store.CloseWithoutSnapshotAsync();

        string shardFile = Path.Combine(dir.Path, "snapshots", $"{newest.Generation:D20}", "shard-0000.bin");
        byte[] bytes = File.ReadAllBytes(shardFile);
        bytes[bytes.Length / 2] ^= 0x40;
        File.WriteAllBytes(shardFile, bytes);

        var reopened = PersistentSeriesStore.Open(Options(), persistence, clock, NullLogger.Instance);
        Assert.Equal(newest.Generation - 1, reopened.Recovery.SnapshotGeneration);
        Assert.Single(reopened.Recovery.SnapshotsRejected);
        Assert.Equal(before, Answers(reopened, clock));
        await reopened.DisposeAsync();
    }

    // Nothing ages out of the first tier during a test, so a log replay rebuilds every bucket from the
    // same values in the same order and the answers match to the bit.
    internal static StoreOptions Options() => new()
    {
        Tiers = [new(TimeSpan.FromSeconds(1), TimeSpan.FromMinutes(10)), new(TimeSpan.FromSeconds(5), TimeSpan.FromHours(1))],
        ShardCount = 4,
    };

    // One time per value, over the last 30 s and so across 10 s buckets, often repeating its
    // neighbour's: a batch both of runs of equal times and of times that change from value to value.
    private static long[] ScatteredTimes(Random rng, int count, long nowMs)
    {
        var times = new long[count];
        for (int i = 0; i < count; i++)
        {
            times[i] = i > 0 && rng.Next(2) == 0 ? times[i - 1] : nowMs - (1000L * rng.Next(0, 30));
        }

        return times;
    }

    internal static async Task FillAsync(ISeriesStore store, FakeTimeProvider clock, int seed)
    {
        var rng = new Random(seed);
        string[] routes = ["/a", "/b", "/c"];
        for (int i = 0; i < 60; i++)
        {
            clock.Advance(TimeSpan.FromMilliseconds(700));
            var values = Enumerable.Range(0, rng.Next(1, 400)).Select(_ => Math.Round(Math.Exp(rng.NextDouble() * 5), 1)).ToArray();
            await store.AppendAsync(new SeriesBatch
            {
                Metric = "svc.latency",
                Labels = new Dictionary<string, string> { ["route"] = routes[rng.Next(routes.Length)] },
                Values = values,
                ValueTimesUnixMs = i % 3 == 0 ? ScatteredTimes(rng, values.Length, clock.GetUtcNow().ToUnixTimeMilliseconds()) : default,
                Producer = "p",
                Sequence = (ulong)((seed * 1000) + i + 1),
            });
        }
    }

    internal static string Answers(ISeriesStore store, FakeTimeProvider clock)
    {
        long now = clock.GetUtcNow().ToUnixTimeMilliseconds();
        var windows = new[] { new TimeWindow(now - 600_000, now + 1), new TimeWindow(now - 30_000, now - 10_000), new TimeWindow(now - 5_000, now + 1) };
        var answers = windows.Select(w => store.Summarize(new SeriesSelector("svc.latency"), w, ["route"], Everything))
            .Select(a => new { a.Covered, Groups = a.Groups.Select(g => new { g.Labels, g.Summary, g.SeriesMerged }) });
        return JsonSerializer.Serialize(new { answers, Series = store.ListSeries() });
    }
}
