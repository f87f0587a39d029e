using Google.Protobuf;
using Microsoft.Extensions.Logging;
using SummaryService.Formats.Store;

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

                // A file cut just after a series record must not pass for whole: its last record is then no footer.
                var header = ShardHeader.Parser.ParseFrom(records[0].Span);
                if (header.FormatVersion != manifest.FormatVersion || header.Shard != shard || header.Generation != manifest.Generation || !TryFooter(records[^1], out ulong footerSeries) || footerSeries != (ulong)(records.Count - 2))
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
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
        {
            problem = ex.Message;
            return false;
        }
    }

    /// <summary>
    /// What can still be read from a damaged generation, the last resort when no generation is
    /// whole: the manifest must be intact; of each shard file, the records before the first damaged
    /// one (a file with a damaged header yields nothing). Every loss goes into <paramref name="dropped"/>.
    /// </summary>
    public static bool TrySalvage(string directory, out SnapshotManifest? manifest, out List<(ShardHeader Header, List<SeriesRecord> Series)> shards, List<string> dropped)
    {
        shards = [];
        manifest = null;
        try
        {
            var manifestRecords = ReadRecords(Path.Combine(directory, ManifestName), out string? problem);
            if (problem is not null || manifestRecords.Count != 1)
            {
                dropped.Add($"manifest unusable ({problem ?? $"{manifestRecords.Count} records"}): nothing can be salvaged");
                return false;
            }

            manifest = SnapshotManifest.Parser.ParseFrom(manifestRecords[0].Span);
            if (!CanRead(manifest.FormatVersion) || manifest.ShardCount == 0 || manifest.ShardLsns.Count != manifest.ShardCount)
            {
                dropped.Add($"manifest has format version {manifest.FormatVersion} and {manifest.ShardLsns.Count} shard marks for {manifest.ShardCount} shards: nothing can be salvaged");
                return false;
            }
        }
        catch (Exception ex) when (ex is InvalidProtocolBufferException or IOException or UnauthorizedAccessException)
        {
            dropped.Add($"manifest unreadable ({ex.Message}): nothing can be salvaged");
            return false;
        }

        for (int shard = 0; shard < manifest.ShardCount; shard++)
        {
            if (SalvageShard(Path.Combine(directory, ShardFileName(shard)), shard, manifest.Generation, manifest.FormatVersion, dropped) is { } salvaged)
            {
                shards.Add(salvaged);
            }
        }

        return true;
    }

    private static (ShardHeader Header, List<SeriesRecord> Series)? SalvageShard(string file, int shard, ulong generation, uint manifestVersion, List<string> dropped)
    {
        string name = Path.GetFileName(file);
        try
        {
            if (!File.Exists(file))
            {
                dropped.Add($"{name}: missing, its series are lost");
                return null;
            }

            byte[] bytes = File.ReadAllBytes(file);
            var records = RecordFraming.ReadAll(bytes, out long good, out string? stop);
            if (records.Count == 0 || ShardHeader.Parser.ParseFrom(records[0].Span) is not { } header || header.FormatVersion != manifestVersion || header.Shard != shard || header.Generation != generation)
            {
                dropped.Add($"{name}: header unusable ({stop ?? "it does not match the manifest"}), all {bytes.Length} bytes dropped");
                return null;
            }

            var series = new List<SeriesRecord>();
            bool complete = false;
            for (int i = 1; i < records.Count; i++)
            {
                if (i == records.Count - 1 && stop is null && TryFooter(records[i], out ulong count) && count == (ulong)series.Count)
                {
                    complete = true;
                    break;
                }

                try
                {
                    series.Add(SeriesRecord.Parser.ParseFrom(records[i].Span));
                }
                catch (InvalidProtocolBufferException ex)
                {
                    stop = $"unparseable series record {i}: {ex.Message}";
                    break;
                }
            }

            if (!complete)
            {
                dropped.Add($"{name}: kept {series.Count} series; the rest is lost ({stop ?? "no footer"}; {bytes.Length - good} bytes after byte {good} unreadable)");
            }

            return (header, series);
        }
        catch (Exception ex) when (ex is InvalidProtocolBufferException or IOException or UnauthorizedAccessException)
        {
            dropped.Add($"{name}: unreadable ({ex.Message}), its series are lost");
            return null;
        }
    }

    // A footer is empty (no series) or starts with its count's tag; a series record starts with its metric's.
    private static bool TryFooter(ReadOnlyMemory<byte> record, out ulong count)
    {
        count = 0;
        if (!record.IsEmpty && record.Span[0] != 0x08)
        {
            return false;
        }

        try
        {
            count = ShardFooter.Parser.ParseFrom(record.Span).Series;
            return true;
        }
        catch (InvalidProtocolBufferException)
        {
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
