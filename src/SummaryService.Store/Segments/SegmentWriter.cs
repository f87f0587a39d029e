using System.Buffers.Binary;
using System.IO.Hashing;
using SummaryService.Sketches;
using SummaryService.Sketches.Serialization;
using SummaryService.Store.Persistence;

namespace SummaryService.Store.Segments;

/// <summary>
/// Builds one segment file (layout in <see cref="SegmentLayout"/>): series are added in series
/// order, each with its buckets in time order, encoded at once so that the caller may add them
/// under a lock and change the sketches right after; <see cref="WriteTo"/> then writes the file
/// off any lock, through <see cref="IDataFiles"/>, under a partial name that is renamed once the
/// file is complete and flushed — a crash leaves either no segment or a whole one.
/// </summary>
internal sealed class SegmentWriter(int shard, int tier, long widthMs)
{
    private readonly MemoryStream _blocks = new();
    private readonly List<SegmentBlock> _index = [];
    private readonly List<BucketLocation> _buckets = [];
    private SeriesKey? _lastKey;
    private long _fromMs = long.MaxValue;
    private long _toMs = long.MinValue;

    /// <summary>Blocks added so far.</summary>
    public int BlockCount => _index.Count;

    /// <summary>
    /// Adds one series' buckets; returns where each landed, in the same order. Series must come in
    /// ascending canonical order and each at most once; buckets in ascending start order.
    /// </summary>
    public IReadOnlyList<BucketLocation> Add(SeriesKey key, IReadOnlyList<(long StartMs, SeriesSketch Sketch)> buckets)
    {
        ArgumentNullException.ThrowIfNull(key);
        ArgumentNullException.ThrowIfNull(buckets);
        if (_lastKey is not null && string.CompareOrdinal(_lastKey.Canonical, key.Canonical) >= 0)
        {
            throw new ArgumentException($"series {key} comes after {_lastKey} in a segment; series are added once each, in canonical order.", nameof(key));
        }

        _lastKey = key;
        var locations = new List<BucketLocation>(buckets.Count);
        int at = 0;
        while (at < buckets.Count)
        {
            at = AddBlock(key, buckets, at, locations);
        }

        return locations;
    }

    /// <summary>Writes the segment into <paramref name="directory"/>; returns what was written.</summary>
    public SegmentInfo WriteTo(IDataFiles files, string directory, ulong number)
    {
        ArgumentNullException.ThrowIfNull(files);
        if (_index.Count == 0)
        {
            throw new InvalidOperationException("a segment holds at least one block.");
        }

        string name = SegmentLayout.FileName(shard, tier, _fromMs, _toMs, number);
        string final = Path.Combine(directory, name);
        string partial = Path.ChangeExtension(final, SegmentLayout.PartialExtension);
        long length;
        using (Stream file = files.CreateNew(partial))
        {
            file.Write(Header());
            _blocks.Position = 0;
            _blocks.CopyTo(file);
            byte[] index = Index();
            file.Write(index);
            file.Write(Footer(SegmentLayout.HeaderBytes + _blocks.Length, index));
            length = file.Position;
            files.Flush(file);
        }

        files.MoveFile(partial, final);
        return new SegmentInfo(name, shard, tier, widthMs, _fromMs, _toMs, length, _index.Count);
    }

    // One block: up to MaxBlockBuckets buckets or MaxBlockBytes bytes, whichever comes first (at least one bucket).
    private int AddBlock(SeriesKey key, IReadOnlyList<(long StartMs, SeriesSketch Sketch)> buckets, int first, List<BucketLocation> locations)
    {
        long blockOffset = SegmentLayout.HeaderBytes + _blocks.Length;
        using var block = new MemoryStream();
        using (var writer = new BinaryWriter(block, System.Text.Encoding.UTF8, leaveOpen: true))
        {
            writer.Write(0u);
            long values = 0;
            int at = first;
            long previous = long.MinValue;
            while (at < buckets.Count && at - first < SegmentLayout.MaxBlockBuckets && (at == first || block.Length < MaxBlockBytes))
            {
                var (start, sketch) = buckets[at];
                if (start <= previous)
                {
                    throw new ArgumentException($"buckets of {key} are not in ascending start order at {start}.", nameof(buckets));
                }

                byte[] encoded = SketchCodec.Serialize(sketch);
                writer.Write(start);
                writer.Write(encoded.Length);
                var location = new BucketLocation(start, _index.Count, blockOffset + block.Position, encoded.Length, sketch.Count, _buckets.Count);
                locations.Add(location);
                _buckets.Add(location);
                writer.Write(encoded);
                values += sketch.Count;
                previous = start;
                at++;
            }

            writer.Flush();
            int count = at - first;
            BinaryPrimitives.WriteUInt32LittleEndian(block.GetBuffer(), (uint)count);
            ReadOnlySpan<byte> bytes = block.GetBuffer().AsSpan(0, (int)block.Length);
            _index.Add(new SegmentBlock(key, buckets[first].StartMs, buckets[at - 1].StartMs, count, values, blockOffset, (int)block.Length, Crc32.HashToUInt32(bytes), _buckets.Count - count));
            _blocks.Write(bytes);
            _fromMs = Math.Min(_fromMs, buckets[first].StartMs);
            _toMs = Math.Max(_toMs, buckets[at - 1].StartMs + widthMs);
            return at;
        }
    }

    /// <summary>Bytes past which a block takes no further bucket: a block is read and checked whole.</summary>
    internal const int MaxBlockBytes = 256 << 10;

    private byte[] Header()
    {
        var header = new byte[SegmentLayout.HeaderBytes];
        Span<byte> span = header;
        SegmentLayout.HeaderMagic.CopyTo(span);
        BinaryPrimitives.WriteUInt32LittleEndian(span[4..], SegmentLayout.Version);
        BinaryPrimitives.WriteUInt32LittleEndian(span[8..], (uint)shard);
        BinaryPrimitives.WriteUInt32LittleEndian(span[12..], (uint)tier);
        BinaryPrimitives.WriteInt64LittleEndian(span[16..], widthMs);
        BinaryPrimitives.WriteInt64LittleEndian(span[24..], _fromMs);
        BinaryPrimitives.WriteInt64LittleEndian(span[32..], _toMs);
        BinaryPrimitives.WriteUInt32LittleEndian(span[40..], Crc32.HashToUInt32(span[..40]));
        return header;
    }

    private byte[] Index()
    {
        using var index = new MemoryStream();
        using (var writer = new BinaryWriter(index, System.Text.Encoding.UTF8, leaveOpen: true))
        {
            writer.Write((uint)_index.Count);
            foreach (SegmentBlock block in _index)
            {
                SegmentLayout.WriteKey(writer, block.Key);
                writer.Write(block.FirstStartMs);
                writer.Write(block.LastStartMs);
                writer.Write((uint)block.Buckets);
                writer.Write((ulong)block.Values);
                writer.Write((ulong)block.Offset);
                writer.Write((uint)block.Length);
                writer.Write(block.Crc);
                for (int b = block.FirstBucket; b < block.FirstBucket + block.Buckets; b++)
                {
                    writer.Write(_buckets[b].StartMs);
                    writer.Write((ulong)_buckets[b].Offset);
                    writer.Write((uint)_buckets[b].Length);
                    writer.Write((ulong)_buckets[b].Values);
                }
            }
        }

        return index.ToArray();
    }

    private byte[] Footer(long indexOffset, byte[] index)
    {
        var footer = new byte[SegmentLayout.FooterBytes];
        Span<byte> span = footer;
        BinaryPrimitives.WriteUInt64LittleEndian(span, (ulong)indexOffset);
        BinaryPrimitives.WriteUInt32LittleEndian(span[8..], (uint)index.Length);
        BinaryPrimitives.WriteUInt32LittleEndian(span[12..], Crc32.HashToUInt32(index));
        BinaryPrimitives.WriteUInt32LittleEndian(span[16..], (uint)_index.Count);
        SegmentLayout.FooterMagic.CopyTo(span[20..]);
        return footer;
    }
}

/// <summary>One block of a segment as its index lists it.</summary>
/// <param name="Key">The series whose buckets it holds.</param>
/// <param name="FirstStartMs">Start of its first bucket.</param>
/// <param name="LastStartMs">Start of its last bucket.</param>
/// <param name="Buckets">How many buckets it holds.</param>
/// <param name="Values">Values in those buckets together.</param>
/// <param name="Offset">Byte offset of the block in the file.</param>
/// <param name="Length">Its length in bytes.</param>
/// <param name="Crc">CRC-32 of its bytes.</param>
/// <param name="FirstBucket">Ordinal of its first bucket in the file.</param>
internal sealed record SegmentBlock(SeriesKey Key, long FirstStartMs, long LastStartMs, int Buckets, long Values, long Offset, int Length, uint Crc, int FirstBucket);

/// <summary>Where one bucket lies in a segment: its block, the offset and length of its sketch bytes in the file, and its ordinal among the file's buckets.</summary>
internal readonly record struct BucketLocation(long StartMs, int Block, long Offset, int Length, long Values, int Ordinal);

/// <summary>A segment file as written or opened.</summary>
/// <param name="FileName">File name in the segment directory.</param>
/// <param name="Shard">The store shard whose series it holds.</param>
/// <param name="Tier">The tier whose buckets it holds.</param>
/// <param name="WidthMs">That tier's bucket width.</param>
/// <param name="FromMs">Start of its earliest bucket.</param>
/// <param name="ToMs">End of its latest bucket.</param>
/// <param name="Bytes">File length.</param>
/// <param name="Blocks">Blocks in it.</param>
public sealed record SegmentInfo(string FileName, int Shard, int Tier, long WidthMs, long FromMs, long ToMs, long Bytes, int Blocks);
