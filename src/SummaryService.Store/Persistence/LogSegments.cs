using Google.Protobuf;
using Microsoft.Extensions.Logging;
using SummaryService.Formats.Store;

namespace SummaryService.Store.Persistence;

/// <summary>Finds, reads and prunes write-ahead log segments.</summary>
internal static class LogSegments
{
    /// <summary>Version written into each record; records without it are version 1.</summary>
    public const uint FormatVersion = 2;

    /// <summary>Segments in log order, by the first sequence number in their name.</summary>
    public static List<(ulong FirstLsn, string Path)> List(string directory)
    {
        if (!Directory.Exists(directory))
        {
            return [];
        }

        return Directory.EnumerateFiles(directory, "*.log")
            .Select(path => (Ok: ulong.TryParse(Path.GetFileNameWithoutExtension(path), out ulong lsn), Lsn: lsn, Path: path))
            .Where(s => s.Ok)
            .OrderBy(s => s.Lsn)
            .Select(s => (s.Lsn, s.Path))
            .ToList();
    }

    /// <summary>
    /// Every readable record of every segment. A torn or damaged tail is cut off the file at the last
    /// good record, with a warning, so the next writer never appends after garbage.
    /// </summary>
    public static List<LogRecord> ReadAll(string directory, ILogger logger, RecoveryReport report)
    {
        var records = new List<LogRecord>();
        foreach (var (_, path) in List(directory))
        {
            byte[] bytes;
            try
            {
                bytes = File.ReadAllBytes(path);
            }
            catch (Exception ex) when (ex is IOException or UnauthorizedAccessException)
            {
                report.Warnings.Add($"{Path.GetFileName(path)}: unreadable ({ex.Message}); its records are lost");
                logger.LogWarning("Write-ahead log segment {Segment} is unreadable and skipped: {Reason}", path, ex.Message);
                continue;
            }

            var payloads = RecordFraming.ReadAll(bytes, out long good, out string? stop);
            int parsed = 0;
            foreach (var payload in payloads)
            {
                LogRecord record;
                try
                {
                    record = LogRecord.Parser.ParseFrom(payload.Span);
                }
                catch (InvalidProtocolBufferException ex)
                {
                    stop = $"unparseable record {parsed}: {ex.Message}";
                    good = payloads.Take(parsed).Sum(p => (long)p.Length + RecordFraming.HeaderBytes);
                    break;
                }

                // A record from a newer server is not damage: cutting it would lose acknowledged batches.
                if (record.FormatVersion > FormatVersion)
                {
                    throw new InvalidDataException($"Write-ahead log segment {Path.GetFileName(path)} holds a record of format version {record.FormatVersion} (record {parsed}); this server reads versions 1 and {FormatVersion}. Open it with the newer server.");
                }

                records.Add(record);
                parsed++;
            }

            report.LogRecordsRead += parsed;
            if (stop is not null)
            {
                long cut = bytes.Length - good;
                report.LogBytesCut += cut;
                report.Warnings.Add($"{Path.GetFileName(path)}: {stop}; cut {cut} bytes after the last good record at byte {good}.");
                logger.LogWarning("Write-ahead log segment {Segment}: {Reason}; cutting {Bytes} bytes after byte {Good}.", path, stop, cut, good);
                using var file = new FileStream(path, FileMode.Open, FileAccess.Write);
                file.SetLength(good);
                file.Flush(flushToDisk: true);
            }
        }

        return records;
    }

    /// <summary>Deletes segments whose first sequence number is below <paramref name="keepFrom"/>: everything in them is in every kept snapshot.</summary>
    public static void DeleteBefore(string directory, ulong keepFrom, ILogger logger)
    {
        var segments = List(directory);
        for (int i = 0; i < segments.Count; i++)
        {
            // A segment may hold records up to the next segment's first number, so it goes only when that one is at or below keepFrom.
            bool covered = i + 1 < segments.Count && segments[i + 1].FirstLsn <= keepFrom;
            if (covered)
            {
                File.Delete(segments[i].Path);
                logger.LogDebug("Deleted write-ahead log segment {Segment}.", segments[i].Path);
            }
        }
    }
}
