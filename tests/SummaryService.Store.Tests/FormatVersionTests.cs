using Google.Protobuf;
using Microsoft.Extensions.Logging.Abstractions;
using Microsoft.Extensions.Time.Testing;
using SummaryService.Store.Persistence;
using SummaryService.Formats.Store;
using SummaryService.TestSupport;

namespace SummaryService.Store.Tests;

/// <summary>
/// Snapshot files and log records carry a format version: this code writes 2 and reads 1 and 2
/// (<see cref="Format1StoreFixtureTests"/> reads a version-1 directory); a snapshot of a version it
/// does not know is passed over for an older one, and a log holding a newer record stops the
/// start-up instead of being cut, so that no acknowledged batch is lost.
/// </summary>
public class FormatVersionTests
{
    [Fact]
    public async Task Snapshots_and_log_records_are_written_as_version_2()
    {
        using var dir = new TempDirectory();
        var clock = new FakeTimeProvider(DateTimeOffset.FromUnixTimeMilliseconds(1_800_000_000_000));
        var store = PersistentSeriesStore.Open(PersistenceTests.Options(), new PersistenceOptions { DataDirectory = dir.Path }, clock, NullLogger.Instance);
        await store.AppendAsync(StoreFixture.Batch("svc.latency", [1, 2, 3]));
        await store.TakeSnapshotAsync();
        await store.AppendAsync(StoreFixture.Batch("svc.latency", [4]));
        await store.CloseWithoutSnapshotAsync();

        string generation = Directory.GetDirectories(Path.Combine(dir.Path, "snapshots")).Single();
        var manifest = SnapshotManifest.Parser.ParseFrom(RecordFraming.ReadAll(File.ReadAllBytes(Path.Combine(generation, SnapshotFiles.ManifestName)), out _, out _)[0].Span);
        Assert.Equal(2u, manifest.FormatVersion);
        var log = LogSegments.ReadAll(Path.Combine(dir.Path, "wal"), NullLogger.Instance, new RecoveryReport());
        Assert.All(log, r => Assert.Equal(2u, r.FormatVersion));
    }

    [Fact]
    public async Task A_log_record_of_a_newer_version_stops_the_start_and_the_segment_is_kept_whole()
    {
        using var dir = new TempDirectory();
        var clock = new FakeTimeProvider(DateTimeOffset.FromUnixTimeMilliseconds(1_800_000_000_000));
        var persistence = new PersistenceOptions { DataDirectory = dir.Path };
        var store = PersistentSeriesStore.Open(PersistenceTests.Options(), persistence, clock, NullLogger.Instance);
        await store.AppendAsync(StoreFixture.Batch("svc.latency", [1, 2, 3]));
        await store.CloseWithoutSnapshotAsync();
        string segment = Directory.GetFiles(Path.Combine(dir.Path, "wal")).Single();
        using (var stream = new FileStream(segment, FileMode.Append))
        {
            RecordFraming.Write(stream, new LogRecord { Lsn = 99, Metric = "svc.latency", FormatVersion = 3 }.ToByteArray());
        }

        long length = new FileInfo(segment).Length;

        var ex = Assert.Throws<InvalidDataException>(() => PersistentSeriesStore.Open(PersistenceTests.Options(), persistence, clock, NullLogger.Instance));

        Assert.Contains("format version 3", ex.Message, StringComparison.Ordinal);
        Assert.Equal(length, new FileInfo(segment).Length);
    }
}
