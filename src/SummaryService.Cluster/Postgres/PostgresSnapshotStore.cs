using Google.Protobuf;
using Npgsql;
using SummaryService.Formats.Store;
using SummaryService.Store;
using SummaryService.Store.Persistence;

namespace SummaryService.Cluster.Postgres;

/// <summary>
/// One partition's snapshot generations: each shard a row of <c>summary_snapshot_shard</c> (its
/// header and its series records), the generation made visible by its manifest row in
/// <c>summary_snapshot</c>, written last in its own transaction. Rows are the file snapshot's
/// records (<see cref="StoreRecordCodec"/>); the database checks what checksums check in files.
/// Every write is fenced by the activation's <paramref name="epoch"/> (<see cref="PartitionEpochs"/>):
/// a superseded activation can neither publish a generation nor disturb the current one's.
/// </summary>
public sealed class PostgresSnapshotStore(int partition, long epoch, NpgsqlDataSource database) : ISnapshotStore
{
    /// <inheritdoc/>
    public IReadOnlyList<ulong> Generations()
    {
        using NpgsqlCommand command = database.CreateCommand("SELECT generation FROM summary_snapshot WHERE partition = @partition ORDER BY generation DESC");
        command.Parameters.AddWithValue("partition", partition);
        using NpgsqlDataReader reader = command.ExecuteReader();
        var generations = new List<ulong>();
        while (reader.Read())
        {
            generations.Add((ulong)reader.GetInt64(0));
        }

        return generations;
    }

    /// <inheritdoc/>
    public bool TryRead(ulong generation, bool salvage, RecoveryReport report, out SnapshotImage? image, out string? problem)
    {
        image = null;
        problem = null;
        SnapshotManifest? manifest = ReadManifest(generation);
        if (manifest is null)
        {
            problem = "no such generation";
            return false;
        }

        if (!StoreRecordCodec.CanReadSnapshot(manifest.FormatVersion))
        {
            problem = $"format version {manifest.FormatVersion} is not one this server reads";
            return false;
        }

        var shards = new List<ShardImage>();
        using NpgsqlCommand command = Command("SELECT header, series FROM summary_snapshot_shard WHERE partition = @partition AND generation = @generation ORDER BY shard", generation);
        using (NpgsqlDataReader reader = command.ExecuteReader())
        {
            while (reader.Read())
            {
                ShardHeader header = ShardHeader.Parser.ParseFrom(reader.GetFieldValue<byte[]>(0));
                byte[][] series = reader.GetFieldValue<byte[][]>(1);
                shards.Add(new ShardImage(StoreRecordCodec.MarkOf(header), [.. series.Select(s => StoreRecordCodec.ImageOf(SeriesRecord.Parser.ParseFrom(s)))]));
            }
        }

        if (shards.Count != manifest.ShardCount)
        {
            problem = $"{shards.Count} of its {manifest.ShardCount} shards are present";
            return false;
        }

        image = new SnapshotImage(StoreRecordCodec.MarkOf(manifest), shards);
        return true;
    }

    /// <inheritdoc/>
    public ISnapshotWriter Begin(ulong generation)
    {
        // Shards left by an abandoned attempt at the same generation would be read as this one's.
        using NpgsqlCommand command = FencedCommand("DELETE FROM summary_snapshot_shard WHERE partition = @partition AND generation = @generation AND EXISTS (SELECT FROM owner)", generation);
        command.ExecuteNonQuery();
        return new Writer(this, generation);
    }

    /// <inheritdoc/>
    public void Prune(int keep)
    {
        using NpgsqlConnection connection = database.OpenConnection();
        using NpgsqlTransaction transaction = connection.BeginTransaction();
        const string Kept = "SELECT generation FROM summary_snapshot WHERE partition = @partition ORDER BY generation DESC LIMIT @keep";
        foreach (string sql in new[]
        {
            $"{PartitionEpochs.Owner}DELETE FROM summary_snapshot_shard WHERE partition = @partition AND generation NOT IN ({Kept}) AND EXISTS (SELECT FROM owner)",
            $"{PartitionEpochs.Owner}DELETE FROM summary_snapshot WHERE partition = @partition AND generation NOT IN ({Kept}) AND EXISTS (SELECT FROM owner)",
        })
        {
            using var command = new NpgsqlCommand(sql, connection, transaction);
            command.Parameters.AddWithValue("partition", partition);
            command.Parameters.AddWithValue("epoch", epoch);
            command.Parameters.AddWithValue("keep", keep);
            command.ExecuteNonQuery();
        }

        transaction.Commit();
    }

    private NpgsqlCommand Command(string sql, ulong generation)
    {
        NpgsqlCommand command = database.CreateCommand(sql);
        command.Parameters.AddWithValue("partition", partition);
        command.Parameters.AddWithValue("generation", (long)generation);
        return command;
    }

    /// <summary>A write that lands only while this activation's epoch is current; <paramref name="sql"/> reads <c>owner</c>.</summary>
    private NpgsqlCommand FencedCommand(string sql, ulong generation)
    {
        NpgsqlCommand command = Command(PartitionEpochs.Owner + sql, generation);
        command.Parameters.AddWithValue("epoch", epoch);
        return command;
    }

    private PartitionFencedException Fenced() => PartitionEpochs.Fenced(database, partition, epoch);

    private SnapshotManifest? ReadManifest(ulong generation)
    {
        using NpgsqlCommand command = Command("SELECT manifest FROM summary_snapshot WHERE partition = @partition AND generation = @generation", generation);
        return command.ExecuteScalar() is byte[] bytes ? SnapshotManifest.Parser.ParseFrom(bytes) : null;
    }

    /// <summary>One generation being written: each shard's series encoded as they arrive, inserted when the shard ends.</summary>
    private sealed class Writer(PostgresSnapshotStore store, ulong generation) : ISnapshotWriter
    {
        private List<byte[]> _series = [];
        private long _bytes;

        public void AddSeries(SeriesKey key, IReadOnlyList<StoredBucket> buckets) =>
            _series.Add(StoreRecordCodec.ToRecord(key, buckets).ToByteArray());

        public async Task EndShardAsync(ShardMark shard)
        {
            byte[] header = StoreRecordCodec.ToHeader(shard, generation).ToByteArray();
            byte[][] series = [.. _series];
            _series = [];
            _bytes += header.Length + series.Sum(s => (long)s.Length);
            await using NpgsqlCommand command = store.FencedCommand("INSERT INTO summary_snapshot_shard (partition, generation, shard, header, series) SELECT @partition, @generation, @shard, @header, @series FROM owner", generation);
            command.Parameters.AddWithValue("shard", shard.Shard);
            command.Parameters.AddWithValue("header", header);
            command.Parameters.AddWithValue("series", series);
            if (await command.ExecuteNonQueryAsync().ConfigureAwait(false) == 0)
            {
                throw store.Fenced();
            }
        }

        public long Complete(SnapshotMark mark)
        {
            byte[] manifest = StoreRecordCodec.ToManifest(mark).ToByteArray();
            using NpgsqlCommand command = store.FencedCommand("INSERT INTO summary_snapshot (partition, generation, manifest) SELECT @partition, @generation, @manifest FROM owner", generation);
            command.Parameters.AddWithValue("manifest", manifest);
            if (command.ExecuteNonQuery() == 0)
            {
                throw store.Fenced();
            }
            return _bytes + manifest.Length;
        }

        public void Dispose()
        {
            // An abandoned generation has no manifest row, so it is never listed; Begin or Prune clears its shards.
        }
    }
}
