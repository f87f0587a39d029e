using Microsoft.Extensions.Logging.Abstractions;
using Microsoft.Extensions.Time.Testing;
using SummaryService.Store.Persistence;
using SummaryService.TestSupport;

namespace SummaryService.Store.Tests;

/// <summary>
/// Producer marks (the highest sequence applied per producer) are forgotten once their producer has
/// been silent for the retention, here and across restarts, so that marks do not pile up forever.
/// </summary>
public class ProducerMarkTests
{
    private static readonly TimeSpan Retention = TimeSpan.FromMinutes(30);

    [Fact]
    public void A_mark_lives_while_its_producer_is_heard_from_and_is_forgotten_after_the_retention()
    {
        var fixture = new StoreFixture(new StoreOptions { Tiers = StoreFixture.SmallTiers, ShardCount = 4, ProducerMarkRetention = Retention });
        fixture.Append(Numbered("quiet", 1));
        fixture.Append(Numbered("steady", 1));
        Assert.Equal(2, fixture.Store.GetStats().ProducerMarks);

        // "steady" keeps resending its first batch (a repeat counts as being heard from); "quiet" says nothing more.
        for (int minute = 1; minute <= 40; minute++)
        {
            fixture.Clock.Advance(TimeSpan.FromMinutes(1));
            Assert.True(fixture.Append(Numbered("steady", 1)).Duplicate);
            fixture.Store.Roll();
        }

        Assert.Equal(1, fixture.Store.GetStats().ProducerMarks);

        // The quiet producer's mark is gone, so the store no longer knows its old sequence: this is
        // the documented price of expiry, and why the retention must exceed any producer's retrying.
        Assert.False(fixture.Append(Numbered("quiet", 1)).Duplicate);
    }

    [Fact]
    public async Task Last_seen_times_survive_a_snapshot_so_a_restart_neither_forgets_nor_revives_a_mark()
    {
        using var dir = new TempDirectory();
        var clock = new FakeTimeProvider(DateTimeOffset.FromUnixTimeMilliseconds(1_800_000_000_000));
        var options = new StoreOptions { Tiers = StoreFixture.SmallTiers, ShardCount = 4, ProducerMarkRetention = Retention };
        var persistence = new PersistenceOptions { DataDirectory = dir.Path, Durability = DurabilityMode.Snapshot };
        var store = PersistentSeriesStore.Open(options, persistence, clock, NullLogger.Instance);
        await store.AppendAsync(Numbered("early", 3));
        clock.Advance(TimeSpan.FromMinutes(20));
        await store.AppendAsync(Numbered("late", 7));
        await store.DisposeAsync(); // final snapshot, 20 minutes after "early" was last heard from

        clock.Advance(TimeSpan.FromMinutes(15));
        var reopened = PersistentSeriesStore.Open(options, persistence, clock, NullLogger.Instance);
        Assert.Equal(2, reopened.GetStats().ProducerMarks);
        Assert.True((await reopened.AppendAsync(Numbered("late", 7))).Duplicate);

        // 35 minutes after "early" and 15 after "late": only the first is past the retention. Had the
        // restart reset last-seen times to the load time, neither would be.
        reopened.Roll();
        Assert.Equal(1, reopened.GetStats().ProducerMarks);
        Assert.False((await reopened.AppendAsync(Numbered("early", 3))).Duplicate);
        await reopened.DisposeAsync();
    }

    [Fact]
    public void A_retention_that_is_not_positive_is_refused_by_name()
    {
        var options = new StoreOptions { ProducerMarkRetention = TimeSpan.Zero };
        var error = Assert.Throws<ArgumentOutOfRangeException>(options.Validate);
        Assert.Equal(nameof(StoreOptions.ProducerMarkRetention), error.ParamName);
    }

    private static SeriesBatch Numbered(string producer, ulong sequence) => new()
    {
        Metric = "harbour.crane.cycle",
        Values = new double[] { 41, 43, 47 },
        Producer = producer,
        Sequence = sequence,
    };
}
