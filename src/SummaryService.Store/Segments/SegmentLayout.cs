using System.Buffers.Binary;
using System.Text;

namespace SummaryService.Store.Segments;

/// <summary>
/// The byte layout of a segment file: aged buckets of one shard and one tier over a time range,
/// immutable once written. All integers little-endian.
/// <code>
/// header  "SSEG" u32 version, u32 shard, u32 tier, i64 width ms, i64 from ms, i64 to ms, u32 CRC-32 of the 40 bytes before it
/// blocks  one after another; each: u32 bucket count, then per bucket i64 start ms, u32 length, that many sketch bytes
/// index   u32 entry count, then per block: series key, i64 first start, i64 last start, u32 buckets,
///         u64 values, u64 offset, u32 length, u32 CRC-32 of the block, then per bucket
///         i64 start, u64 offset, u32 length, u64 values (so buckets are found without reading blocks)
/// footer  u64 index offset, u32 index length, u32 CRC-32 of the index, u32 block count, "GESS"
/// </code>
/// Blocks follow series order (the series key's canonical form, ordinal) and, within a series,
/// time order; a series' buckets are cut into blocks of at most <see cref="MaxBlockBuckets"/>, so a
/// narrow window reads and checks a few blocks, not the series' whole range. The fixed footer at
/// the end makes a cut file detectable before anything in it is trusted; every block carries its
/// own checksum, so damage costs the blocks it hits, which are named with the file.
/// </summary>
internal static class SegmentLayout
{
    public const uint Version = 1;

    public const int HeaderBytes = 44;

    public const int FooterBytes = 24;

    /// <summary>Most buckets in one block: an hour of 10 s buckets, or six hours of 1 min ones.</summary>
    public const int MaxBlockBuckets = 360;

    /// <summary>Longest metric name, label name or value the key encoding takes (the store's limits are far lower).</summary>
    public const int MaxKeyPartBytes = ushort.MaxValue;

    public static ReadOnlySpan<byte> HeaderMagic => "SSEG"u8;

    public static ReadOnlySpan<byte> FooterMagic => "GESS"u8;

    /// <summary>
    /// Tier field of a segment of pre-merged blocks: above every bucket tier, naming the bucket tier
    /// and the block level (<see cref="SeriesTimeline.BlockFactors"/>); its width is the block's.
    /// </summary>
    public static int BlockTier(int tier, int level) => BlockTierBase + (tier * 10) + level;

    /// <summary>The bucket tier and block level a segment of pre-merged blocks holds, or null for a segment of buckets.</summary>
    public static (int Tier, int Level)? OfBlockTier(int tier) => tier >= BlockTierBase ? ((tier - BlockTierBase) / 10, (tier - BlockTierBase) % 10) : null;

    private const int BlockTierBase = 1000;

    /// <summary>Extension of a complete segment file.</summary>
    public const string Extension = ".seg";

    /// <summary>Extension while a segment is written; such a file is never read and is removed at start-up.</summary>
    public const string PartialExtension = ".seg-partial";

    /// <summary>File name of a segment: shard, tier and time range, then a number unique within the directory.</summary>
    public static string FileName(int shard, int tier, long fromMs, long toMs, ulong number) =>
        $"s{shard:D4}-t{tier}-{fromMs}-{toMs}-{number:D8}{Extension}";

    /// <summary>Shard, tier field and time range a segment file name gives, or null for another name.</summary>
    public static (int Shard, int Tier, TimeWindow Range)? TryParseName(string fileName)
    {
        string[] parts = fileName.EndsWith(Extension, StringComparison.Ordinal) ? fileName[..^Extension.Length].Split('-') : [];
        return parts.Length == 5 && parts[0].StartsWith('s') && int.TryParse(parts[0].AsSpan(1), out int shard)
            && parts[1].StartsWith('t') && int.TryParse(parts[1].AsSpan(1), out int tier)
            && long.TryParse(parts[2], out long from) && long.TryParse(parts[3], out long to) && from < to
            ? (shard, tier, new TimeWindow(from, to))
            : null;
    }

    /// <summary>The number a segment file name ends with, or 0 for another name: new segments continue after the highest on disk.</summary>
    public static ulong NumberOf(string fileName)
    {
        int dash = fileName.LastIndexOf('-');
        return fileName.EndsWith(Extension, StringComparison.Ordinal) && dash >= 0 && ulong.TryParse(fileName.AsSpan(dash + 1, fileName.Length - dash - 1 - Extension.Length), out ulong number) ? number : 0;
    }

    public static void WriteKey(BinaryWriter writer, SeriesKey key)
    {
        WriteText(writer, key.Metric);
        writer.Write((ushort)key.Labels.Count);
        foreach (var (name, value) in key.Labels)
        {
            WriteText(writer, name);
            WriteText(writer, value);
        }
    }

    /// <summary>Reads a key at <paramref name="at"/>, moving past it; throws <see cref="FormatException"/> when it runs past the span.</summary>
    public static SeriesKey ReadKey(ReadOnlySpan<byte> span, ref int at)
    {
        string metric = ReadText(span, ref at);
        int labelCount = ReadUInt16(span, ref at);
        var labels = new KeyValuePair<string, string>[labelCount];
        for (int i = 0; i < labelCount; i++)
        {
            string name = ReadText(span, ref at);
            labels[i] = new(name, ReadText(span, ref at));
        }

        return new SeriesKey(metric, labels);
    }

    public static int ReadUInt16(ReadOnlySpan<byte> span, ref int at)
    {
        Need(span, at, 2);
        int value = BinaryPrimitives.ReadUInt16LittleEndian(span[at..]);
        at += 2;
        return value;
    }

    public static uint ReadUInt32(ReadOnlySpan<byte> span, ref int at)
    {
        Need(span, at, 4);
        uint value = BinaryPrimitives.ReadUInt32LittleEndian(span[at..]);
        at += 4;
        return value;
    }

    public static long ReadInt64(ReadOnlySpan<byte> span, ref int at)
    {
        Need(span, at, 8);
        long value = BinaryPrimitives.ReadInt64LittleEndian(span[at..]);
        at += 8;
        return value;
    }

    public static void Need(ReadOnlySpan<byte> span, int at, long bytes)
    {
        if (at < 0 || bytes < 0 || at + bytes > span.Length)
        {
            throw new FormatException($"a field of {bytes} bytes at byte {at} runs past the end ({span.Length} bytes)");
        }
    }

    private static void WriteText(BinaryWriter writer, string text)
    {
        byte[] bytes = Encoding.UTF8.GetBytes(text);
        if (bytes.Length > MaxKeyPartBytes)
        {
            throw new ArgumentException($"a series key part of {bytes.Length} bytes exceeds the segment format's {MaxKeyPartBytes}.", nameof(text));
        }

        writer.Write((ushort)bytes.Length);
        writer.Write(bytes);
    }

    private static string ReadText(ReadOnlySpan<byte> span, ref int at)
    {
        int length = ReadUInt16(span, ref at);
        Need(span, at, length);
        string text = Encoding.UTF8.GetString(span.Slice(at, length));
        at += length;
        return text;
    }
}
