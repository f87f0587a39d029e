using Google.Protobuf;
using Microsoft.Extensions.Logging;
using SummaryService.Sketches.Serialization;
using SummaryService.Formats.Store;

namespace SummaryService.Store.Persistence;

/// <summary>
/// Snapshot generations as directories of checksummed files (<see cref="SnapshotFiles"/>), written
/// through <see cref="IDataFiles"/> by <see cref="SnapshotWriter"/>; records are translated by
/// <see cref="StoreRecordCodec"/>.
/// </summary>
public sealed class FileSnapshotStore : ISnapshotStore
{
    private readonly string _root;
    private readonly IDataFiles _files;
    private readonly ILogger _logger;

    /// <summary>Generations under <paramref name="root"/> (created if missing).</summary>
    public FileSnapshotStore(string root, IDataFiles files, ILogger logger)
    {
        _root = root;
        _files = files;
        _logger = logger;
        Directory.CreateDirectory(root);
    }

    /// <inheritdoc/>
    public IReadOnlyList<ulong> Generations() => SnapshotFiles.List(_root).Select(g => g.Generation).ToArray();

    /// <inheritdoc/>
    public bool TryRead(ulong generation, bool salvage, RecoveryReport report, out SnapshotImage? image, out string? problem)
    {
        ArgumentNullException.ThrowIfNull(report);
        image = null;
        problem = null;
        string path = PathOf(generation);
        bool read = salvage
            ? SnapshotFiles.TrySalvage(path, out var manifest, out var shards, report.Warnings)
            : SnapshotFiles.TryRead(path, out manifest, out shards, out problem);
        if (!read)
        {
            return false;
        }

        image = new SnapshotImage(StoreRecordCodec.MarkOf(manifest!), shards.Select(s => new ShardImage(StoreRecordCodec.MarkOf(s.Header), s.Series.Select(StoreRecordCodec.ImageOf).ToArray())).ToArray());
        return true;
    }

    /// <inheritdoc/>
    public ISnapshotWriter Begin(ulong generation) => new Writer(SnapshotWriter.Begin(_root, generation, _files), generation);

    /// <inheritdoc/>
    public void Prune(int keep) => SnapshotFiles.Prune(_root, keep, _logger);

    private string PathOf(ulong generation) => Path.Combine(_root, $"{generation:D20}");

    /// <summary>One generation being written: each shard's series encoded as they arrive, written when the shard ends.</summary>
    private sealed class Writer(SnapshotWriter files, ulong generation) : ISnapshotWriter
    {
        private List<byte[]> _series = [];

        public void AddSeries(SeriesKey key, IReadOnlyList<StoredBucket> buckets)
        {
            // Each record is serialized at once: its message objects die young instead of piling up
            // (several times the serialized size) until the whole shard is written.
            _series.Add(StoreRecordCodec.ToRecord(key, buckets).ToByteArray());
        }

        public async Task EndShardAsync(ShardMark shard)
        {
            ShardHeader header = StoreRecordCodec.ToHeader(shard, generation);
            List<byte[]> series = _series;
            _series = [];
            await Task.Run(() => files.WriteShard(header, series)).ConfigureAwait(false);
        }

        public long Complete(SnapshotMark mark)
        {
            string directory = files.Complete(StoreRecordCodec.ToManifest(mark));
            return Directory.EnumerateFiles(directory).Sum(f => new FileInfo(f).Length);
        }

        public void Dispose() => files.Dispose();
    }
}
