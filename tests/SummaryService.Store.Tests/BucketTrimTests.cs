using Microsoft.Extensions.Logging.Abstractions;
using Microsoft.Extensions.Time.Testing;
using SummaryService.Store.Persistence;
using SummaryService.TestSupport;

namespace SummaryService.Store.Tests;

/// <summary>
/// A busy bucket keeps working space while values pour in; once its series opens a newer bucket it
/// gives that space back, so a store holds what it would hold after a restart, where every bucket
/// is read back at exactly its size.
/// </summary>
public class BucketTrimTests
{
    [Fact]
    public async Task A_busy_bucket_shrinks_to_its_restored_size_once_a_newer_bucket_opens()
    {
        using var dir = new TempDirectory();
        var clock = new FakeTimeProvider(DateTimeOffset.FromUnixTimeMilliseconds(1_800_000_000_000));
        var persistence = new PersistenceOptions { DataDirectory = dir.Path };
        var store = PersistentSeriesStore.Open(PersistenceTests.Options(), persistence, clock, NullLogger.Instance);
        var rng = new Random(81);
        ulong sequence = 0;
        for (int bucket = 0; bucket < 3; bucket++)
        {
            // Twenty batches of a thousand values: each bucket compacts many times over.
            for (int batch = 0; batch < 20; batch++)
            {
                double[] values = Enumerable.Range(0, 1000).Select(_ => Math.Exp(3 + rng.NextDouble())).ToArray();
                await store.AppendAsync(new SeriesBatch { Metric = "svc.latency", Values = values, Producer = "p", Sequence = ++sequence });
            }

            clock.Advance(TimeSpan.FromSeconds(10));
        }

        // The newest bucket is small (three values), so it too is held at its restored size.
        await store.AppendAsync(new SeriesBatch { Metric = "svc.latency", Values = new double[] { 1, 2, 3 }, Producer = "p", Sequence = ++sequence });
        await store.TakeSnapshotAsync();
        string answers = PersistenceTests.Answers(store, clock);
        StoreStats before = store.GetStats();
        await store.CloseWithoutSnapshotAsync();

        var reopened = PersistentSeriesStore.Open(PersistenceTests.Options(), persistence, clock, NullLogger.Instance);
        StoreStats after = reopened.GetStats();
        Assert.Equal(4, after.Buckets);
        Assert.Equal(after.EstimatedBytes, before.EstimatedBytes);
        Assert.Equal(answers, PersistenceTests.Answers(reopened, clock));
        await reopened.DisposeAsync();
    }
}
