// A store process for the crash tests: it pushes numbered batches and tells its parent, line by
// line on stdout, which ones were acknowledged. The parent kills it with SIGKILL at random points.
// Arguments: <data directory> <first new sequence> <first sequence to send again>
using Microsoft.Extensions.Logging.Abstractions;
using SummaryService.Store;
using SummaryService.Store.Persistence;

string dataDirectory = args[0];
ulong first = ulong.Parse(args[1], System.Globalization.CultureInfo.InvariantCulture);
ulong resendFrom = ulong.Parse(args[2], System.Globalization.CultureInfo.InvariantCulture);
var persistence = new PersistenceOptions { DataDirectory = dataDirectory, Durability = DurabilityMode.Wal };
await using var store = PersistentSeriesStore.Open(new StoreOptions(), persistence, TimeProvider.System, NullLogger.Instance);
Console.Out.WriteLine($"READY {store.Recovery}");
Console.Out.Flush();

async Task PushAsync(ulong sequence)
{
    Console.Out.WriteLine($"SEND {sequence}");
    Console.Out.Flush();
    var batch = new SeriesBatch
    {
        Metric = $"crash.b{sequence}",
        Values = Enumerable.Range(0, 10).Select(i => (double)(sequence + (ulong)i)).ToArray(),
        Producer = "crash-host",
        Sequence = sequence,
    };
    var result = await store.AppendAsync(batch);
    Console.Out.WriteLine($"{(result.Duplicate ? "DUP" : "ACK")} {sequence}");
    Console.Out.Flush();
}

for (ulong sequence = resendFrom; sequence < first; sequence++)
{
    await PushAsync(sequence);
}

// Bounded: the parent normally kills the process long before this runs out.
for (ulong sequence = first; sequence < first + 100_000; sequence++)
{
    await PushAsync(sequence);
    if (sequence % 40 == 0)
    {
        await store.TakeSnapshotAsync();
    }
}
