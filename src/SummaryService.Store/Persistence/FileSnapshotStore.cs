using Google.Protobuf;
using Microsoft.Extensions.Logging;
using SummaryService.Sketches.Serialization;
using SummaryService.Formats.Store;

namespace SummaryService.Store.Persistence;

/// <summary>
/// Snapshot generations as directories of checksummed files (<see cref="SnapshotFiles"/>), written
/// through <see cref="IDataFiles"/> by <see cref="SnapshotWriter"/>. It is the only place snapshot
/// records are encoded or decoded.
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

        image = new SnapshotImage(MarkOf(manifest!), shards.Select(s => new ShardImage(MarkOf(s.Header), s.Series.Select(ImageOf).ToArray())).ToArray());
        return true;
    }

    /// <inheritdoc/>
    public ISnapshotWriter Begin(ulong generation) => new Writer(SnapshotWriter.Begin(_root, generation, _files), generation);

    /// <inheritdoc/>
    public void Prune(int keep) => SnapshotFiles.Prune(_root, keep, _logger);

    private string PathOf(ulong generation) => Path.Combine(_root, $"{generation:D20}");

    // Snapshots written before last-seen times were kept count their producers as heard from at creation.
    private static SnapshotMark MarkOf(SnapshotManifest manifest)
    {
        var producers = new Dictionary<string, ProducerMark>(StringComparer.Ordinal);
        foreach (var (producer, highest) in manifest.Producers)
        {
            long seen = manifest.ProducersLastSeenUnixMs.TryGetValue(producer, out long at) ? at : manifest.CreatedUnixMs;
            producers[producer] = new ProducerMark(highest, seen);
        }

        return new SnapshotMark(manifest.Generation, manifest.CreatedUnixMs, [.. manifest.ShardLsns], manifest.LogStart, producers);
    }

    private static ShardMark MarkOf(ShardHeader header) => new((int)header.Shard, (int)header.ShardCount, header.AppliedLsn, [.. header.TierWidthsMs]);

    private static SeriesImage ImageOf(SeriesRecord record) => new(record.Metric, () =>
    {
        var key = new SeriesKey(record.Metric, record.Labels);
        var buckets = record.Buckets.Select(b => new StoredBucket(b.Tier > int.MaxValue ? -1 : (int)b.Tier, b.StartUnixMs, SketchCodec.FromState(b.Sketch))).ToArray();
        return (key, buckets);
    });

    /// <summary>One generation being written: each shard's series encoded as they arrive, written when the shard ends.</summary>
    private sealed class Writer(SnapshotWriter files, ulong generation) : ISnapshotWriter
    {
        private List<byte[]> _series = [];

        public void AddSeries(SeriesKey key, IReadOnlyList<StoredBucket> buckets)
        {
            // Each record is serialized at once: its message objects die young instead of piling up
            // (several times the serialized size) until the whole shard is written.
            var record = new SeriesRecord { Metric = key.Metric };
            foreach (var (name, value) in key.Labels)
            {
                record.Labels.Add(name, value);
            }

            foreach (StoredBucket bucket in buckets)
            {
                record.Buckets.Add(new BucketRecord { Tier = (uint)bucket.Tier, StartUnixMs = bucket.StartUnixMs, Sketch = SketchCodec.ToState(bucket.Sketch) });
            }

            _series.Add(record.ToByteArray());
        }

        public async Task EndShardAsync(ShardMark shard)
        {
            var header = new ShardHeader { FormatVersion = SnapshotFiles.FormatVersion, Generation = generation, Shard = (uint)shard.Shard, ShardCount = (uint)shard.ShardCount, AppliedLsn = shard.AppliedLsn };
            header.TierWidthsMs.AddRange(shard.TierWidthsMs);
            List<byte[]> series = _series;
            _series = [];
            await Task.Run(() => files.WriteShard(header, series)).ConfigureAwait(false);
        }

        public long Complete(SnapshotMark mark)
        {
            var manifest = new SnapshotManifest
            {
                FormatVersion = SnapshotFiles.FormatVersion,
                Generation = mark.Generation,
                CreatedUnixMs = mark.CreatedUnixMs,
                ShardCount = (uint)mark.ShardLsns.Count,
                LogStart = mark.LogStart,
            };
            manifest.ShardLsns.AddRange(mark.ShardLsns);
            foreach (var (producer, produced) in mark.Producers)
            {
                manifest.Producers[producer] = produced.Highest;
                manifest.ProducersLastSeenUnixMs[producer] = produced.LastSeenUnixMs;
            }

            string directory = files.Complete(manifest);
            return Directory.EnumerateFiles(directory).Sum(f => new FileInfo(f).Length);
        }

        public void Dispose() => files.Dispose();
    }
}
