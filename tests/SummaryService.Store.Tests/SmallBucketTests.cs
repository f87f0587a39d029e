using Microsoft.Extensions.Logging.Abstractions;
using Microsoft.Extensions.Time.Testing;
using SummaryService.Sketches;
using SummaryService.Store.Persistence;
using SummaryService.TestSupport;

namespace SummaryService.Store.Tests;

/// <summary>
/// Buckets of a quiet series hold a few values each and take the small sketch form; they must stay
/// small, and answer the same, after a restart from a snapshot and after a log replay, so that a
/// recovered store fits in the memory it had.
/// </summary>
public class SmallBucketTests
{
    [Fact]
    public async Task Few_value_buckets_stay_small_across_a_snapshot_restart_and_a_log_replay()
    {
        using var dir = new TempDirectory();
        var clock = new FakeTimeProvider(DateTimeOffset.FromUnixTimeMilliseconds(1_800_000_000_000));
        var persistence = new PersistenceOptions { DataDirectory = dir.Path };
        var store = PersistentSeriesStore.Open(PersistenceTests.Options(), persistence, clock, NullLogger.Instance);
        await FillQuietAsync(store, clock, sequenceBase: 0);
        await store.TakeSnapshotAsync();
        await FillQuietAsync(store, clock, sequenceBase: 1000);
        string answers = PersistenceTests.Answers(store, clock);
        StoreStats before = store.GetStats();
        await store.CloseWithoutSnapshotAsync();

        // Every bucket holds 3 values, so its estimate is the small form's: far below a full composite
        // with its KLL and mode parts (about 850 bytes for 3 values).
        long fullFormBytes = FullFormBytes(3);
        Assert.True(before.EstimatedBytes / before.Buckets * 3 < fullFormBytes, $"{before.EstimatedBytes / before.Buckets} B per bucket vs {fullFormBytes} B full");

        var reopened = PersistentSeriesStore.Open(PersistenceTests.Options(), persistence, clock, NullLogger.Instance);
        Assert.NotNull(reopened.Recovery.SnapshotGeneration);
        Assert.True(reopened.Recovery.LogRecordsReplayed > 0);
        StoreStats after = reopened.GetStats();
        Assert.Equal(before.Buckets, after.Buckets);
        Assert.Equal(before.EstimatedBytes, after.EstimatedBytes);
        Assert.Equal(answers, PersistenceTests.Answers(reopened, clock));
        await reopened.DisposeAsync();
    }

    private static long FullFormBytes(int values)
    {
        var full = new SeriesSketch(seed: 1);
        _ = full.Quantiles; // reading a part turns the sketch into the full form
        full.Add(new double[values]);
        return full.EstimatedBytes;
    }

    // One batch of three values per route per 1 s bucket, as a quiet series sends them.
    private static async Task FillQuietAsync(ISeriesStore store, FakeTimeProvider clock, int sequenceBase)
    {
        string[] routes = ["/a", "/b", "/c"];
        for (int i = 0; i < 40; i++)
        {
            clock.Advance(TimeSpan.FromSeconds(1));
            for (int r = 0; r < routes.Length; r++)
            {
                await store.AppendAsync(new SeriesBatch
                {
                    Metric = "svc.latency",
                    Labels = new Dictionary<string, string> { ["route"] = routes[r] },
                    Values = new double[] { 10 + i, 20 + r, 10 + i },
                    Producer = "p",
                    Sequence = (ulong)(sequenceBase + (i * routes.Length) + r + 1),
                });
            }
        }
    }
}
