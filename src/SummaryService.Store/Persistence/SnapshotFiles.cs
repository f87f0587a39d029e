using Google.Protobuf;
using Microsoft.Extensions.Logging;
using SummaryService.Store.Persistence.Formats;

namespace SummaryService.Store.Persistence;

/// <summary>
/// Snapshot generations on disk: <c>snapshots/{generation}/shard-NNNN.bin</c> plus <c>manifest.bin</c>.
/// <see cref="SnapshotWriter"/> writes a generation; this class lists, reads and prunes them.
/// </summary>
internal static class SnapshotFiles
{
    /// <summary>Version written: 2, whose buckets may be sketch states of version 2 (log buckets, compact form).</summary>
    public const uint FormatVersion = 2;

    /// <summary>Versions read: 1 (sketch states of version 1 only) and 2; a newer one is refused as unusable.</summary>
    public static bool CanRead(uint version) => version is 1 or FormatVersion;

    /// <summary>Name of the manifest file in a generation's directory.</summary>
    public const string ManifestName = "manifest.bin";

    public static string ShardFileName(int shard) => $"shard-{shard:D4}.bin";

    /// <summary>Generations on disk, newest first.</summary>
    public static List<(ulong Generation, string Path)> List(string root)
    {
        if (!Directory.Exists(root))
        {
            return [];
        }

        return Directory.EnumerateDirectories(root)
            .Select(path => (Ok: ulong.TryParse(Path.GetFileName(path), out ulong g), Generation: g, Path: path))
            .Where(d => d.Ok)
            .OrderByDescending(d => d.Generation)
            .Select(d => (d.Generation, d.Path))
            .ToList();
    }

    /// <summary>Reads a whole generation, or explains in <paramref name="problem"/> why it cannot be used.</summary>
    public static bool TryRead(string directory, out SnapshotManifest? manifest, out List<(ShardHeader Header, List<SeriesRecord> Series)> shards, out string? problem)
    {
        shards = [];
        manifest = null;
        try
        {
            var manifestRecords = ReadRecords(Path.Combine(directory, ManifestName), out problem);
            if (problem is not null || manifestRecords.Count != 1)
            {
                problem ??= $"manifest holds {manifestRecords.Count} records, expected 1";
                return false;
            }

            manifest = SnapshotManifest.Parser.ParseFrom(manifestRecords[0].Span);
            if (!CanRead(manifest.FormatVersion) || manifest.ShardCount == 0 || manifest.ShardLsns.Count != manifest.ShardCount)
            {
                problem = $"manifest has format version {manifest.FormatVersion} and {manifest.ShardLsns.Count} shard marks for {manifest.ShardCount} shards";
                return false;
            }

            for (int shard = 0; shard < manifest.ShardCount; shard++)
            {
                string file = Path.Combine(directory, ShardFileName(shard));
                var records = ReadRecords(file, out problem);
                if (problem is not null)
                {
                    problem = $"{Path.GetFileName(file)}: {problem}";
                    return false;
                }

                if (records.Count < 2)
                {
                    problem = $"{Path.GetFileName(file)}: missing header or footer";
                    return false;
                }

                var header = ShardHeader.Parser.ParseFrom(records[0].Span);
                var footer = ShardFooter.Parser.ParseFrom(records[^1].Span);
                if (header.FormatVersion != manifest.FormatVersion || header.Shard != shard || header.Generation != manifest.Generation || footer.Series != (ulong)(records.Count - 2))
                {
                    problem = $"{Path.GetFileName(file)}: header or footer does not match the manifest";
                    return false;
                }

                var series = records.Skip(1).Take(records.Count - 2).Select(r => SeriesRecord.Parser.ParseFrom(r.Span)).ToList();
                shards.Add((header, series));
            }

            return true;
        }
        catch (InvalidProtocolBufferException ex)
        {
            problem = $"unparseable record: {ex.Message}";
            return false;
        }
        catch (IOException ex)
        {
            problem = ex.Message;
            return false;
        }
    }

    /// <summary>Keeps the newest <paramref name="keep"/> generations and removes older ones and leftover temporary directories.</summary>
    public static void Prune(string root, int keep, ILogger logger)
    {
        foreach (var (_, path) in List(root).Skip(keep))
        {
            Directory.Delete(path, recursive: true);
            logger.LogDebug("Deleted old snapshot {Snapshot}.", path);
        }

        foreach (string temp in Directory.EnumerateDirectories(root, "*.tmp"))
        {
            Directory.Delete(temp, recursive: true);
        }
    }

    private static List<ReadOnlyMemory<byte>> ReadRecords(string path, out string? problem)
    {
        if (!File.Exists(path))
        {
            problem = "file missing";
            return [];
        }

        byte[] bytes = File.ReadAllBytes(path);
        var records = RecordFraming.ReadAll(bytes, out _, out problem);
        return records;
    }
}
