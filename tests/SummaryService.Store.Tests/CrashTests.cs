using Microsoft.Extensions.Logging.Abstractions;
using SummaryService.Store.Persistence;
using SummaryService.TestSupport;

namespace SummaryService.Store.Tests;

/// <summary>With durability "wal", an acknowledged batch survives kill -9, exactly once.</summary>
public class CrashTests
{
    [Fact]
    public async Task Every_acknowledged_batch_survives_repeated_sigkill_exactly_once()
    {
        using var dir = new TempDirectory();
        var rng = new Random(61);
        var acknowledged = new HashSet<ulong>();
        ulong highestSent = 0;
        for (int run = 0; run < 12; run++)
        {
            ulong first = highestSent + 1;
            ulong resendFrom = highestSent > 5 ? highestSent - 5 : 1;
            using var host = new CrashHostProcess(dir.Path, first, resendFrom);
            int target = (int)(first - resendFrom) + rng.Next(5, 80);
            Assert.True(host.WaitForAcknowledgements(target, TimeSpan.FromSeconds(60)), $"run {run}: the host acknowledged too little before the timeout. {host.StandardError}");
            await Task.Delay(rng.Next(0, 30));
            host.Kill();

            // Batches acknowledged before the crash come back as duplicates when sent again, never as new.
            foreach (ulong resent in Enumerable.Range((int)resendFrom, (int)(first - resendFrom)).Select(i => (ulong)i))
            {
                Assert.False(acknowledged.Contains(resent) && host.Acknowledged.Contains(resent), $"run {run}: batch {resent} was acknowledged before the crash and accepted again after it");
            }

            acknowledged.UnionWith(host.Acknowledged);
            acknowledged.UnionWith(host.Duplicates.Where(s => s < first));
            highestSent = Math.Max(highestSent, host.HighestSent);
        }

        var store = PersistentSeriesStore.Open(new StoreOptions(), new PersistenceOptions { DataDirectory = dir.Path }, TimeProvider.System, NullLogger.Instance);
        var present = store.ListSeries().ToDictionary(s => ulong.Parse(s.Key.Metric["crash.b".Length..], System.Globalization.CultureInfo.InvariantCulture), s => s.Count);
        foreach (ulong sequence in acknowledged)
        {
            Assert.True(present.TryGetValue(sequence, out long count), $"acknowledged batch {sequence} is missing after the crashes");
            Assert.Equal(10, count);
        }

        Assert.All(present, p => Assert.Equal(10, p.Value));
        Assert.All(present.Keys, s => Assert.True(s <= highestSent));
        await store.CloseWithoutSnapshotAsync();
    }
}
