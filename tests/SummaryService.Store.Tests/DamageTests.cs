using Microsoft.Extensions.Logging.Abstractions;
using Microsoft.Extensions.Time.Testing;
using SummaryService.Store.Persistence;
using SummaryService.TestSupport;

namespace SummaryService.Store.Tests;

/// <summary>Truncated or bit-flipped files never stop start-up: the valid prefix comes back and the loss is reported.</summary>
public class DamageTests
{
    private static readonly DateTimeOffset Start = DateTimeOffset.FromUnixTimeMilliseconds(1_800_000_000_000);

    [Fact]
    public async Task A_log_cut_at_any_offset_recovers_exactly_the_whole_records_before_the_cut()
    {
        using var original = new TempDirectory();
        var clock = new FakeTimeProvider(Start);
        var counts = await WriteLogOnlyAsync(original.Path, clock);
        string segment = Directory.EnumerateFiles(Path.Combine(original.Path, "wal"), "*.log").Single();
        byte[] bytes = File.ReadAllBytes(segment);
        var ends = RecordEnds(bytes);

        for (int cut = 0; cut <= bytes.Length; cut += Math.Max(1, bytes.Length / 150))
        {
            using var damaged = new TempDirectory();
            TempDirectory.Copy(original.Path, damaged.Path);
            File.WriteAllBytes(Path.Combine(damaged.Path, "wal", Path.GetFileName(segment)), bytes[..cut]);

            var store = PersistentSeriesStore.Open(PersistenceTests.Options(), new PersistenceOptions { DataDirectory = damaged.Path }, clock, NullLogger.Instance);
            int whole = ends.Count(e => e <= cut);
            Assert.Equal(counts.Take(whole).Sum(), TotalValues(store));
            Assert.Equal(whole, store.Recovery.LogRecordsReplayed);
            bool torn = !ends.Contains(cut) && cut != 0;
            Assert.Equal(torn, store.Recovery.LogBytesCut > 0);
            await store.CloseWithoutSnapshotAsync();

            // The cut is made on disk, so the next start reads a clean log.
            Assert.Equal(ends.Where(e => e <= cut).DefaultIfEmpty(0).Max(), new FileInfo(Path.Combine(damaged.Path, "wal", Path.GetFileName(segment))).Length);
        }
    }

    [Fact]
    public async Task Bit_flips_in_the_log_never_stop_start_up_and_keep_the_records_before_them()
    {
        using var original = new TempDirectory();
        var clock = new FakeTimeProvider(Start);
        var counts = await WriteLogOnlyAsync(original.Path, clock);
        string segment = Directory.EnumerateFiles(Path.Combine(original.Path, "wal"), "*.log").Single();
        byte[] bytes = File.ReadAllBytes(segment);
        var ends = RecordEnds(bytes);
        var rng = new Random(71);

        for (int trial = 0; trial < 60; trial++)
        {
            using var damaged = new TempDirectory();
            TempDirectory.Copy(original.Path, damaged.Path);
            byte[] flipped = (byte[])bytes.Clone();
            int at = rng.Next(flipped.Length);
            flipped[at] ^= (byte)(1 << rng.Next(8));
            File.WriteAllBytes(Path.Combine(damaged.Path, "wal", Path.GetFileName(segment)), flipped);

            var store = PersistentSeriesStore.Open(PersistenceTests.Options(), new PersistenceOptions { DataDirectory = damaged.Path }, clock, NullLogger.Instance);
            int before = ends.Count(e => e <= at);
            Assert.Equal(counts.Take(before).Sum(), TotalValues(store));
            Assert.NotEmpty(store.Recovery.Warnings);
            await store.CloseWithoutSnapshotAsync();
        }
    }

    [Fact]
    public async Task Damaged_snapshots_fall_back_or_keep_their_valid_part_but_never_throw()
    {
        using var original = new TempDirectory();
        var clock = new FakeTimeProvider(Start);
        var persistence = new PersistenceOptions { DataDirectory = original.Path, Durability = DurabilityMode.Snapshot };
        var store = PersistentSeriesStore.Open(PersistenceTests.Options(), persistence, clock, NullLogger.Instance);
        await PersistenceTests.FillAsync(store, clock, seed: 8);
        await store.DisposeAsync();
        long expected = TotalValues(PersistentSeriesStore.Open(PersistenceTests.Options(), persistence, clock, NullLogger.Instance));

        var files = Directory.EnumerateFiles(Path.Combine(original.Path, "snapshots"), "*.bin", SearchOption.AllDirectories).ToList();
        var rng = new Random(72);
        for (int trial = 0; trial < 80; trial++)
        {
            using var damaged = new TempDirectory();
            TempDirectory.Copy(original.Path, damaged.Path);
            string victim = files[rng.Next(files.Count)].Replace(original.Path, damaged.Path, StringComparison.Ordinal);
            byte[] bytes = File.ReadAllBytes(victim);
            if (trial % 2 == 0)
            {
                File.WriteAllBytes(victim, bytes[..rng.Next(bytes.Length)]);
            }
            else
            {
                bytes[rng.Next(bytes.Length)] ^= (byte)(1 << rng.Next(8));
                File.WriteAllBytes(victim, bytes);
            }

            var reopened = PersistentSeriesStore.Open(PersistenceTests.Options(), persistence with { DataDirectory = damaged.Path }, clock, NullLogger.Instance);

            // Only one generation exists, so damage means keeping its valid part (nothing, when the
            // manifest is hit) — and saying what was lost.
            Assert.Single(reopened.Recovery.SnapshotsRejected);
            Assert.True(reopened.Recovery.SnapshotSalvaged || reopened.Recovery.SnapshotGeneration is null);
            Assert.NotEmpty(reopened.Recovery.Warnings);
            Assert.InRange(TotalValues(reopened), 0, expected);
            await reopened.CloseWithoutSnapshotAsync();
        }

        Assert.True(expected > 0);
    }

    private static async Task<List<long>> WriteLogOnlyAsync(string directory, FakeTimeProvider clock)
    {
        var store = PersistentSeriesStore.Open(PersistenceTests.Options(), new PersistenceOptions { DataDirectory = directory }, clock, NullLogger.Instance);
        var counts = new List<long>();
        var rng = new Random(70);
        for (int i = 0; i < 40; i++)
        {
            var values = Enumerable.Range(0, rng.Next(1, 50)).Select(_ => rng.NextDouble()).ToArray();
            await store.AppendAsync(new SeriesBatch { Metric = "damage.x", Values = values });
            counts.Add(values.Length);
        }

        await store.CloseWithoutSnapshotAsync();
        return counts;
    }

    // Offsets just past each framed record: 8 header bytes, then the length the header states.
    internal static List<long> RecordEnds(byte[] bytes)
    {
        var ends = new List<long>();
        long offset = 0;
        while (offset + 8 <= bytes.Length)
        {
            offset += 8 + BitConverter.ToUInt32(bytes, (int)offset);
            ends.Add(offset);
        }

        return ends;
    }

    private static long TotalValues(ISeriesStore store) => store.ListSeries().Sum(s => s.Count);
}
