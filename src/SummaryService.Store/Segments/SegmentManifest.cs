using System.Buffers.Binary;
using System.Text;
using SummaryService.Store.Persistence;

namespace SummaryService.Store.Segments;

/// <summary>
/// Which aged buckets a snapshot generation holds in segment files: per segment, its file name and
/// one bit per bucket of the file (set when the bucket is live in that generation's cut); then the
/// spans lost to damaged segments, per series, so a restart keeps leaving them out and saying so.
/// Kept beside the segments as <c>manifest-{generation}.bin</c>, written before the generation is
/// completed; records framed with a CRC each (<see cref="RecordFraming"/>). A snapshot then costs
/// the head plus a bit per aged bucket, not the aged buckets themselves.
/// </summary>
/// <remarks>
/// Header: u32 version, u64 generation, u32 segment records, and from version 2 u32 lost-span
/// records. A lost-span record: series key (<see cref="SegmentLayout.WriteKey"/>), i64 from ms,
/// i64 to ms, u16 length and UTF-8 bytes of the damaged segment's name. Version 1 files (no lost
/// spans) still read.
/// </remarks>
internal static class SegmentManifest
{
    public const uint Version = 2;

    private const string Prefix = "manifest-";

    public static string FileName(ulong generation) => $"{Prefix}{generation:D20}.bin";

    /// <summary>Generation a manifest file belongs to, or null for any other file.</summary>
    public static ulong? GenerationOf(string fileName) =>
        fileName.StartsWith(Prefix, StringComparison.Ordinal) && fileName.EndsWith(".bin", StringComparison.Ordinal) && ulong.TryParse(fileName.AsSpan(Prefix.Length, fileName.Length - Prefix.Length - 4), out ulong g) ? g : null;

    public static void Write(IDataFiles files, string directory, ulong generation, IReadOnlyList<(string File, bool[] Live)> segments, IReadOnlyList<(SeriesKey Key, LostSpan Span)> lost)
    {
        string final = Path.Combine(directory, FileName(generation));
        string partial = final + ".partial";
        using (Stream file = files.CreateNew(partial))
        {
            var header = new byte[20];
            BinaryPrimitives.WriteUInt32LittleEndian(header, Version);
            BinaryPrimitives.WriteUInt64LittleEndian(header.AsSpan(4), generation);
            BinaryPrimitives.WriteUInt32LittleEndian(header.AsSpan(12), (uint)segments.Count);
            BinaryPrimitives.WriteUInt32LittleEndian(header.AsSpan(16), (uint)lost.Count);
            RecordFraming.Write(file, header);
            foreach (var (name, live) in segments)
            {
                RecordFraming.Write(file, Encode(name, live));
            }

            foreach (var (key, span) in lost)
            {
                RecordFraming.Write(file, EncodeLost(key, span));
            }

            files.Flush(file);
        }

        files.MoveFile(partial, final);
    }

    /// <summary>
    /// Reads generation <paramref name="generation"/>'s manifest. A missing one means the generation
    /// keeps no bucket in segments (true, empty list); a damaged one is false with the reason.
    /// </summary>
    public static bool TryRead(string directory, ulong generation, out List<(string File, bool[] Live)> segments, out string? problem) =>
        TryRead(directory, generation, out segments, out _, out problem);

    /// <summary>As <see cref="TryRead(string, ulong, out List{ValueTuple{string, bool[]}}, out string?)"/>, with the lost spans the generation remembers.</summary>
    public static bool TryRead(string directory, ulong generation, out List<(string File, bool[] Live)> segments, out List<(SeriesKey Key, LostSpan Span)> lost, out string? problem)
    {
        segments = [];
        lost = [];
        problem = null;
        string path = Path.Combine(directory, FileName(generation));
        if (!File.Exists(path))
        {
            return true;
        }

        var records = RecordFraming.ReadAll(File.ReadAllBytes(path), out _, out string? stop);
        if (stop is not null || records.Count == 0 || records[0].Length < 16)
        {
            problem = $"{FileName(generation)}: {stop ?? "no header"}";
            return false;
        }

        ReadOnlySpan<byte> header = records[0].Span;
        uint version = BinaryPrimitives.ReadUInt32LittleEndian(header);
        uint count = BinaryPrimitives.ReadUInt32LittleEndian(header[12..]);
        uint lostCount = version >= 2 && header.Length >= 20 ? BinaryPrimitives.ReadUInt32LittleEndian(header[16..]) : 0;
        if (version is < 1 or > Version || header.Length != (version == 1 ? 16 : 20) || BinaryPrimitives.ReadUInt64LittleEndian(header[4..]) != generation || count + (long)lostCount != records.Count - 1)
        {
            problem = $"{FileName(generation)}: version {version}, {records.Count - 1} records for {count} segments and {lostCount} lost spans listed";
            return false;
        }

        try
        {
            segments = [.. records.Skip(1).Take((int)count).Select(r => Decode(r.Span))];
            lost = [.. records.Skip(1 + (int)count).Select(r => DecodeLost(r.Span))];
            return true;
        }
        catch (FormatException ex)
        {
            problem = $"{FileName(generation)}: {ex.Message}";
            return false;
        }
    }

    private static byte[] Encode(string name, bool[] live)
    {
        byte[] text = Encoding.UTF8.GetBytes(name);
        var bytes = new byte[2 + text.Length + 4 + ((live.Length + 7) / 8)];
        BinaryPrimitives.WriteUInt16LittleEndian(bytes, (ushort)text.Length);
        text.CopyTo(bytes, 2);
        BinaryPrimitives.WriteUInt32LittleEndian(bytes.AsSpan(2 + text.Length), (uint)live.Length);
        for (int i = 0; i < live.Length; i++)
        {
            if (live[i])
            {
                bytes[6 + text.Length + (i / 8)] |= (byte)(1 << (i % 8));
            }
        }

        return bytes;
    }

    private static byte[] EncodeLost(SeriesKey key, LostSpan span)
    {
        using var bytes = new MemoryStream();
        using (var writer = new BinaryWriter(bytes, Encoding.UTF8, leaveOpen: true))
        {
            SegmentLayout.WriteKey(writer, key);
            writer.Write(span.Range.FromUnixMs);
            writer.Write(span.Range.ToUnixMs);
            byte[] name = Encoding.UTF8.GetBytes(span.Segment);
            writer.Write((ushort)name.Length);
            writer.Write(name);
        }

        return bytes.ToArray();
    }

    private static (SeriesKey Key, LostSpan Span) DecodeLost(ReadOnlySpan<byte> record)
    {
        int at = 0;
        SeriesKey key = SegmentLayout.ReadKey(record, ref at);
        long from = SegmentLayout.ReadInt64(record, ref at);
        long to = SegmentLayout.ReadInt64(record, ref at);
        int length = SegmentLayout.ReadUInt16(record, ref at);
        SegmentLayout.Need(record, at, length);
        if (from >= to)
        {
            throw new FormatException($"a lost span of {key} runs from {from} to {to}");
        }

        return (key, new LostSpan(new TimeWindow(from, to), Encoding.UTF8.GetString(record.Slice(at, length))));
    }

    private static (string File, bool[] Live) Decode(ReadOnlySpan<byte> record)
    {
        int at = 0;
        int length = SegmentLayout.ReadUInt16(record, ref at);
        SegmentLayout.Need(record, at, length);
        string name = Encoding.UTF8.GetString(record.Slice(at, length));
        at += length;
        int count = (int)SegmentLayout.ReadUInt32(record, ref at);
        SegmentLayout.Need(record, at, (count + 7L) / 8);
        var live = new bool[count];
        for (int i = 0; i < count; i++)
        {
            live[i] = (record[at + (i / 8)] & (1 << (i % 8))) != 0;
        }

        return (name, live);
    }
}
