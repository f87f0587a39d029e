using Google.Protobuf;
using Microsoft.Extensions.Logging.Abstractions;
using Microsoft.Extensions.Time.Testing;
using SummaryService.Sketches.Serialization;
using SummaryService.Store.Persistence;
using SummaryService.Formats.Store;
using SummaryService.TestSupport;

namespace SummaryService.Store.Tests;

/// <summary>
/// Every file of a small data directory cut at every offset, and hit by random bit flips: start-up
/// never throws, keeps exactly the valid part, and says what it dropped.
/// </summary>
public sealed class EveryOffsetDamageTests(Xunit.Abstractions.ITestOutputHelper output)
{
    private static readonly DateTimeOffset Start = DateTimeOffset.FromUnixTimeMilliseconds(1_800_000_000_000);

    /// <summary>Two shards, three series, a few values per batch: files of a few hundred bytes, so every offset is affordable.</summary>
    private static StoreOptions Small() => PersistenceTests.Options() with { ShardCount = 2 };

    [Fact]
    public async Task A_newest_snapshot_cut_anywhere_loses_nothing_because_the_older_generation_and_the_log_cover_it()
    {
        using var original = new TempDirectory();
        using var scratch = new Scratch(original.Path);
        var clock = new FakeTimeProvider(Start);
        long total = await WriteGenerationsAsync(original.Path, clock, kept: 2);
        string newest = SnapshotFiles.List(Path.Combine(original.Path, "snapshots"))[0].Path;
        int cuts = 0;

        foreach (string file in Directory.EnumerateFiles(newest))
        {
            byte[] bytes = File.ReadAllBytes(file);
            for (int cut = 0; cut < bytes.Length; cut++, cuts++)
            {
                var recovery = await ReopenAsync(scratch, clock, 2, file, bytes[..cut], expectedValues: total);
                Assert.Equal(1ul, recovery.SnapshotGeneration); // the older generation, whole
                Assert.Single(recovery.SnapshotsRejected);
            }
        }

        Assert.True(cuts > 500, $"only {cuts} offsets");
        output.WriteLine($"{cuts} offsets of the newest generation's files tried");
    }

    [Fact]
    public async Task A_single_snapshot_cut_anywhere_keeps_the_series_before_the_cut_and_reports_the_rest_lost()
    {
        using var original = new TempDirectory();
        using var scratch = new Scratch(original.Path);
        var clock = new FakeTimeProvider(Start);
        await WriteGenerationsAsync(original.Path, clock, kept: 1);
        string generation = SnapshotFiles.List(Path.Combine(original.Path, "snapshots")).Single().Path;
        long logValues = LogOnlyValues(original.Path);
        var shardValues = Directory.EnumerateFiles(generation, "shard-*").ToDictionary(f => f, SeriesValues);

        foreach (var (file, perRecord) in shardValues)
        {
            byte[] bytes = File.ReadAllBytes(file);
            var ends = DamageTests.RecordEnds(bytes);
            long others = shardValues.Where(s => s.Key != file).Sum(s => s.Value.Sum());
            for (int cut = 0; cut < bytes.Length; cut++)
            {
                // Whole series records before the cut survive, unless the cut is inside the header.
                int wholeRecords = ends.Count(e => e <= cut);
                long kept = wholeRecords == 0 ? 0 : perRecord.Take(wholeRecords - 1).Sum();
                var recovery = await ReopenAsync(scratch, clock, 1, file, bytes[..cut], expectedValues: others + kept + logValues);
                Assert.True(recovery.SnapshotSalvaged);
                Assert.Contains(recovery.Warnings, w => w.Contains(Path.GetFileName(file), StringComparison.Ordinal));
            }
        }

        string manifest = Path.Combine(generation, SnapshotFiles.ManifestName);
        byte[] manifestBytes = File.ReadAllBytes(manifest);
        for (int cut = 0; cut < manifestBytes.Length; cut++)
        {
            // Without its manifest a generation's log positions and producer marks are unknown: only the log after it is kept.
            var recovery = await ReopenAsync(scratch, clock, 1, manifest, manifestBytes[..cut], expectedValues: logValues);
            Assert.Null(recovery.SnapshotGeneration);
            Assert.Contains(recovery.Warnings, w => w.Contains("manifest", StringComparison.Ordinal));
        }

        output.WriteLine($"{shardValues.Keys.Sum(f => new FileInfo(f).Length) + manifestBytes.Length} offsets of the only generation's files tried");
    }

    [Fact]
    public async Task A_log_after_a_snapshot_cut_anywhere_keeps_the_snapshot_and_the_whole_records_before_the_cut()
    {
        using var original = new TempDirectory();
        using var scratch = new Scratch(original.Path);
        var clock = new FakeTimeProvider(Start);
        long total = await WriteGenerationsAsync(original.Path, clock, kept: 2);
        long logValues = LogOnlyValues(original.Path);
        string segment = LastSegment(original.Path);
        byte[] bytes = File.ReadAllBytes(segment);
        var ends = DamageTests.RecordEnds(bytes);
        var perRecord = RecordFraming.ReadAll(bytes, out _, out _).Select(r => (long)LogRecord.Parser.ParseFrom(r.Span).Values.Count).ToList();

        for (int cut = 0; cut < bytes.Length; cut++)
        {
            long kept = perRecord.Take(ends.Count(e => e <= cut)).Sum();
            var recovery = await ReopenAsync(scratch, clock, 2, segment, bytes[..cut], expectedValues: total - logValues + kept);
            Assert.Equal(2ul, recovery.SnapshotGeneration);
            Assert.Equal(!ends.Contains(cut) && cut != 0, recovery.LogBytesCut > 0);
        }

        output.WriteLine($"{bytes.Length} offsets of the log segment tried");
    }

    [Fact]
    public async Task Random_bit_flips_anywhere_never_stop_start_up_and_are_reported()
    {
        using var original = new TempDirectory();
        using var scratch = new Scratch(original.Path);
        var clock = new FakeTimeProvider(Start);
        long total = await WriteGenerationsAsync(original.Path, clock, kept: 2);
        var files = Directory.EnumerateFiles(original.Path, "*", SearchOption.AllDirectories).ToList();
        var rng = new Random(1903);

        for (int trial = 0; trial < 400; trial++)
        {
            string file = files[rng.Next(files.Count)];
            byte[] bytes = File.ReadAllBytes(file);
            for (int flips = rng.Next(1, 4); flips > 0; flips--)
            {
                bytes[rng.Next(bytes.Length)] ^= (byte)(1 << rng.Next(8));
            }

            var recovery = await ReopenAsync(scratch, clock, 2, file, bytes, expectedValues: null);
            Assert.True(recovery.SnapshotsRejected.Count > 0 || recovery.Warnings.Count > 0, $"a flip in {file} went unreported");
            Assert.True(Count(recovery) <= total);
        }
    }

    [Fact]
    public async Task Records_whose_frame_checks_out_but_whose_content_is_nonsense_are_skipped_and_reported()
    {
        using var original = new TempDirectory();
        using var scratch = new Scratch(original.Path);
        var clock = new FakeTimeProvider(Start);
        long total = await WriteGenerationsAsync(original.Path, clock, kept: 2);
        string segment = LastSegment(original.Path);
        var nonsense = new[]
        {
            new LogRecord { Lsn = 10_000, Metric = "svc.latency", Values = { 1, 2, 3 }, TimesUnixMs = { 1, 2 } }, // three values, two times
            new LogRecord { Lsn = 10_001, Metric = "svc.latency", TimesUnixMs = { Start.ToUnixTimeMilliseconds() }, Sketch = new() { Version = 999 } },
        };
        using var appended = new MemoryStream();
        appended.Write(File.ReadAllBytes(segment));
        foreach (var record in nonsense)
        {
            RecordFraming.Write(appended, record.ToByteArray());
        }

        var recovery = await ReopenAsync(scratch, clock, 2, segment, appended.ToArray(), expectedValues: total);
        Assert.Equal(2, recovery.LogRecordsUnusable);
    }

    // Resets the scratch copy to the original, replaces one file, opens the store, checks the value
    // count, closes it. One scratch directory serves every offset: creating and deleting a directory
    // per offset cost more than all the rest together.
    private static async Task<RecoveryReport> ReopenAsync(Scratch scratch, FakeTimeProvider clock, int kept, string file, byte[] content, long? expectedValues)
    {
        scratch.Reset();
        File.WriteAllBytes(scratch.PathOf(file), content);
        var store = PersistentSeriesStore.Open(Small(), new PersistenceOptions { DataDirectory = scratch.Path, SnapshotsKept = kept }, clock, NullLogger.Instance);
        try
        {
            long values = store.ListSeries().Sum(s => s.Count);
            if (expectedValues is { } expected)
            {
                Assert.True(expected == values, $"{System.IO.Path.GetFileName(file)} cut to {content.Length} bytes: {values} values recovered, {expected} expected ({store.Recovery})");
            }

            store.Recovery.Warnings.Add($"values {values}");
            return store.Recovery;
        }
        finally
        {
            await store.CloseWithoutSnapshotAsync();
        }
    }

    private static long Count(RecoveryReport recovery) => long.Parse(recovery.Warnings[^1]["values ".Length..], System.Globalization.CultureInfo.InvariantCulture);

    /// <summary>Batches, a snapshot, batches, a second snapshot (with <paramref name="kept"/> 2 the first stays), then batches only in the log.</summary>
    private static async Task<long> WriteGenerationsAsync(string directory, FakeTimeProvider clock, int kept)
    {
        var store = PersistentSeriesStore.Open(Small(), new PersistenceOptions { DataDirectory = directory, SnapshotsKept = kept }, clock, NullLogger.Instance);
        var rng = new Random(1904);
        string[] routes = ["/a", "/b", "/c"];
        long total = 0;
        for (int phase = 0; phase < 3; phase++)
        {
            for (int i = 0; i < 5; i++)
            {
                clock.Advance(TimeSpan.FromMilliseconds(300));
                var values = Enumerable.Range(0, rng.Next(1, 6)).Select(_ => (double)rng.Next(100)).ToArray();
                await store.AppendAsync(new SeriesBatch { Metric = "svc.latency", Labels = new Dictionary<string, string> { ["route"] = routes[rng.Next(3)] }, Values = values, Producer = "p", Sequence = (ulong)((phase * 10) + i + 1) });
                total += values.Length;
            }

            if (phase < 2)
            {
                await store.TakeSnapshotAsync();
            }
        }

        await store.CloseWithoutSnapshotAsync();
        return total;
    }

    private static long LogOnlyValues(string directory)
    {
        return RecordFraming.ReadAll(File.ReadAllBytes(LastSegment(directory)), out _, out _).Sum(r => (long)LogRecord.Parser.ParseFrom(r.Span).Values.Count);
    }

    private static string LastSegment(string directory) =>
        Directory.EnumerateFiles(Path.Combine(directory, "wal"), "*.log").OrderBy(f => f, StringComparer.Ordinal).Last();

    // The values each series record of a shard file holds, in file order.
    private static List<long> SeriesValues(string shardFile)
    {
        var records = RecordFraming.ReadAll(File.ReadAllBytes(shardFile), out _, out _);
        return records.Skip(1).Take(records.Count - 2)
            .Select(r => SeriesRecord.Parser.ParseFrom(r.Span).Buckets.Sum(b => SketchCodec.FromState(b.Sketch).Count))
            .ToList();
    }

    /// <summary>A copy of a data directory that can be put back to the original's files in place.</summary>
    private sealed class Scratch(string original) : IDisposable
    {
        private readonly TempDirectory _directory = new();

        public string Path => _directory.Path;

        public string PathOf(string originalFile) => originalFile.Replace(original, Path, StringComparison.Ordinal);

        public void Reset()
        {
            var wanted = Directory.EnumerateFiles(original, "*", SearchOption.AllDirectories).Select(PathOf).ToHashSet(StringComparer.Ordinal);
            foreach (string extra in Directory.EnumerateFiles(Path, "*", SearchOption.AllDirectories).Where(f => !wanted.Contains(f)))
            {
                File.Delete(extra);
            }

            TempDirectory.Copy(original, Path);
        }

        public void Dispose() => _directory.Dispose();
    }
}
