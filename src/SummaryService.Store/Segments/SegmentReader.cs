using System.Buffers.Binary;
using System.IO.Hashing;
using System.IO.MemoryMappedFiles;
using SummaryService.Sketches;
using SummaryService.Sketches.Serialization;

namespace SummaryService.Store.Segments;

/// <summary>
/// One segment file, memory-mapped: opening checks the header, footer and index (so a cut or
/// scribbled file is refused before anything in it is used); a block is read from the mapping and
/// checked against its CRC the first time it is needed. Every failure is a
/// <see cref="SegmentDamagedException"/> naming the file. Pages are the operating system's cache,
/// not the process' heap. Thread-safe for reads.
/// </summary>
internal sealed class SegmentReader : IDisposable
{
    private readonly MemoryMappedFile _map;
    private readonly MemoryMappedViewAccessor _view;
    private readonly int[] _checked;

    private SegmentReader(string path, MemoryMappedFile map, MemoryMappedViewAccessor view, SegmentInfo info, SegmentBlock[] blocks, BucketLocation[] buckets)
    {
        Buckets = buckets;
        Path = path;
        _map = map;
        _view = view;
        Info = info;
        Blocks = blocks;
        _checked = new int[blocks.Length];
    }

    /// <summary>The file's full path.</summary>
    public string Path { get; }

    /// <summary>What the header says: shard, tier, width, time range; and the file's length and block count.</summary>
    public SegmentInfo Info { get; }

    /// <summary>The index: every block in file order (series order, then time order).</summary>
    public IReadOnlyList<SegmentBlock> Blocks { get; }

    /// <summary>Every bucket in file order (its <see cref="BucketLocation.Ordinal"/> is its place here).</summary>
    public IReadOnlyList<BucketLocation> Buckets { get; }

    /// <summary>Maps and checks the file at <paramref name="path"/>.</summary>
    /// <exception cref="SegmentDamagedException">The file is cut short, fails a checksum or cannot be decoded.</exception>
    public static SegmentReader Open(string path)
    {
        string name = System.IO.Path.GetFileName(path);
        var stream = new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.Read | FileShare.Delete);
        long length = stream.Length;
        if (length < SegmentLayout.HeaderBytes + SegmentLayout.FooterBytes + 4)
        {
            stream.Dispose();
            throw new SegmentDamagedException(name, $"it is {length} bytes long, shorter than a header, an empty index and a footer");
        }

        var map = MemoryMappedFile.CreateFromFile(stream, null, 0, MemoryMappedFileAccess.Read, HandleInheritability.None, leaveOpen: false);
        MemoryMappedViewAccessor? view = null;
        try
        {
            view = map.CreateViewAccessor(0, length, MemoryMappedFileAccess.Read);
            var (info, blocks, buckets) = ReadFrame(view, length, name);
            return new SegmentReader(path, map, view, info, blocks, buckets);
        }
        catch
        {
            view?.Dispose();
            map.Dispose();
            throw;
        }
    }

    /// <summary>The buckets of block <paramref name="block"/>, decoded, in time order.</summary>
    /// <exception cref="SegmentDamagedException">The block fails its checksum or cannot be decoded.</exception>
    public List<(long StartMs, SeriesSketch Sketch)> ReadBlock(int block)
    {
        byte[] bytes = CheckedBlock(block);
        var buckets = new List<(long, SeriesSketch)>();
        try
        {
            int at = 0;
            uint count = SegmentLayout.ReadUInt32(bytes, ref at);
            for (uint i = 0; i < count; i++)
            {
                long start = SegmentLayout.ReadInt64(bytes, ref at);
                int length = (int)SegmentLayout.ReadUInt32(bytes, ref at);
                SegmentLayout.Need(bytes, at, length);
                buckets.Add((start, SketchCodec.Deserialize(bytes.AsSpan(at, length))));
                at += length;
            }
        }
        catch (Exception ex) when (ex is FormatException)
        {
            throw Damaged($"block {block} cannot be decoded ({ex.Message})", ex);
        }

        return buckets;
    }

    /// <summary>One bucket's sketch, read from where <paramref name="location"/> says; its block is checked on its first read.</summary>
    /// <exception cref="SegmentDamagedException">The block fails its checksum or the bucket cannot be decoded.</exception>
    public SeriesSketch ReadBucket(BucketLocation location)
    {
        if (location.Block < 0 || location.Block >= Blocks.Count)
        {
            throw new ArgumentOutOfRangeException(nameof(location), location.Block, $"segment {Info.FileName} has {Blocks.Count} blocks.");
        }

        if (Volatile.Read(ref _checked[location.Block]) == 0)
        {
            CheckedBlock(location.Block);
        }

        SegmentBlock block = Blocks[location.Block];
        if (location.Offset < block.Offset || location.Offset + location.Length > block.Offset + block.Length)
        {
            throw new ArgumentOutOfRangeException(nameof(location), location.Offset, $"bucket bytes at {location.Offset} lie outside block {location.Block} of segment {Info.FileName}.");
        }

        var bytes = new byte[location.Length];
        _view.ReadArray(location.Offset, bytes, 0, bytes.Length);
        try
        {
            return SketchCodec.Deserialize(bytes);
        }
        catch (SketchFormatException ex)
        {
            throw Damaged($"the bucket at byte {location.Offset} cannot be decoded ({ex.Message})", ex);
        }
    }

    /// <summary>Checks every block's checksum and content; throws for the first that fails.</summary>
    public void VerifyAll()
    {
        for (int i = 0; i < Blocks.Count; i++)
        {
            ReadBlock(i);
        }
    }

    public void Dispose()
    {
        _view.Dispose();
        _map.Dispose();
    }

    private byte[] CheckedBlock(int block)
    {
        SegmentBlock entry = Blocks[block];
        var bytes = new byte[entry.Length];
        _view.ReadArray(entry.Offset, bytes, 0, bytes.Length);
        if (Crc32.HashToUInt32(bytes) != entry.Crc)
        {
            throw Damaged($"block {block} (series {entry.Key}, bytes {entry.Offset}–{entry.Offset + entry.Length}) fails its CRC");
        }

        Volatile.Write(ref _checked[block], 1);
        return bytes;
    }

    private SegmentDamagedException Damaged(string problem, Exception? inner = null) => new(Info.FileName, problem, inner);

    private static (SegmentInfo Info, SegmentBlock[] Blocks, BucketLocation[] Buckets) ReadFrame(MemoryMappedViewAccessor view, long length, string name)
    {
        var header = new byte[SegmentLayout.HeaderBytes];
        view.ReadArray(0, header, 0, header.Length);
        if (!header.AsSpan(0, 4).SequenceEqual(SegmentLayout.HeaderMagic))
        {
            throw new SegmentDamagedException(name, "its header does not begin with the segment mark");
        }

        if (Crc32.HashToUInt32(header.AsSpan(0, 40)) != BinaryPrimitives.ReadUInt32LittleEndian(header.AsSpan(40)))
        {
            throw new SegmentDamagedException(name, "its header fails its CRC");
        }

        uint version = BinaryPrimitives.ReadUInt32LittleEndian(header.AsSpan(4));
        if (version != SegmentLayout.Version)
        {
            throw new SegmentDamagedException(name, $"it has format version {version}; this server reads version {SegmentLayout.Version}");
        }

        var footer = new byte[SegmentLayout.FooterBytes];
        view.ReadArray(length - SegmentLayout.FooterBytes, footer, 0, footer.Length);
        if (!footer.AsSpan(20, 4).SequenceEqual(SegmentLayout.FooterMagic))
        {
            throw new SegmentDamagedException(name, "it does not end with a footer (cut short?)");
        }

        ulong indexOffset = BinaryPrimitives.ReadUInt64LittleEndian(footer);
        uint indexLength = BinaryPrimitives.ReadUInt32LittleEndian(footer.AsSpan(8));
        uint indexCrc = BinaryPrimitives.ReadUInt32LittleEndian(footer.AsSpan(12));
        uint blockCount = BinaryPrimitives.ReadUInt32LittleEndian(footer.AsSpan(16));
        long indexEnd = length - SegmentLayout.FooterBytes;
        if (indexOffset < SegmentLayout.HeaderBytes || indexOffset + indexLength != (ulong)indexEnd)
        {
            throw new SegmentDamagedException(name, $"its footer places the index at bytes {indexOffset}+{indexLength}, which does not end where the footer begins ({indexEnd})");
        }

        var index = new byte[indexLength];
        view.ReadArray((long)indexOffset, index, 0, index.Length);
        if (Crc32.HashToUInt32(index) != indexCrc)
        {
            throw new SegmentDamagedException(name, "its index fails its CRC");
        }

        int shard = (int)BinaryPrimitives.ReadUInt32LittleEndian(header.AsSpan(8));
        int tier = (int)BinaryPrimitives.ReadUInt32LittleEndian(header.AsSpan(12));
        long width = BinaryPrimitives.ReadInt64LittleEndian(header.AsSpan(16));
        long from = BinaryPrimitives.ReadInt64LittleEndian(header.AsSpan(24));
        long to = BinaryPrimitives.ReadInt64LittleEndian(header.AsSpan(32));
        SegmentBlock[] blocks;
        var buckets = new List<BucketLocation>();
        try
        {
            blocks = ReadIndex(index, (long)indexOffset, buckets);
        }
        catch (FormatException ex)
        {
            throw new SegmentDamagedException(name, $"its index cannot be decoded ({ex.Message})", ex);
        }

        if (blocks.Length != blockCount)
        {
            throw new SegmentDamagedException(name, $"its footer counts {blockCount} blocks, its index lists {blocks.Length}");
        }

        return (new SegmentInfo(name, shard, tier, width, from, to, length, blocks.Length), blocks, [.. buckets]);
    }

    // Every block must lie between the header and the index, in file order, without overlap.
    private static SegmentBlock[] ReadIndex(byte[] index, long indexOffset, List<BucketLocation> buckets)
    {
        int at = 0;
        uint blockCount = SegmentLayout.ReadUInt32(index, ref at);
        if (blockCount > index.Length)
        {
            throw new FormatException($"the index claims {blockCount} blocks in {index.Length} bytes");
        }

        var blocks = new SegmentBlock[blockCount];
        long expected = SegmentLayout.HeaderBytes;
        for (int i = 0; i < blocks.Length; i++)
        {
            SeriesKey key = SegmentLayout.ReadKey(index, ref at);
            long first = SegmentLayout.ReadInt64(index, ref at);
            long last = SegmentLayout.ReadInt64(index, ref at);
            int count = (int)SegmentLayout.ReadUInt32(index, ref at);
            long values = SegmentLayout.ReadInt64(index, ref at);
            long offset = SegmentLayout.ReadInt64(index, ref at);
            int length = (int)SegmentLayout.ReadUInt32(index, ref at);
            uint crc = SegmentLayout.ReadUInt32(index, ref at);
            if (offset != expected || length < 4 || offset + length > indexOffset)
            {
                throw new FormatException($"block {i} at bytes {offset}+{length} does not follow the previous one at {expected} within the file's blocks");
            }

            if (count > index.Length)
            {
                throw new FormatException($"block {i} claims {count} buckets in an index of {index.Length} bytes");
            }

            blocks[i] = new SegmentBlock(key, first, last, count, values, offset, length, crc, buckets.Count);
            long bucketAt = offset + 4;
            for (int b = 0; b < count; b++)
            {
                long start = SegmentLayout.ReadInt64(index, ref at);
                long bucketOffset = SegmentLayout.ReadInt64(index, ref at);
                int bucketLength = (int)SegmentLayout.ReadUInt32(index, ref at);
                long bucketValues = SegmentLayout.ReadInt64(index, ref at);
                if (bucketOffset != bucketAt + 12 || bucketLength < 0 || bucketOffset + bucketLength > offset + length)
                {
                    throw new FormatException($"bucket {b} of block {i} at bytes {bucketOffset}+{bucketLength} is not where the block's layout puts it");
                }

                buckets.Add(new BucketLocation(start, i, bucketOffset, bucketLength, bucketValues, buckets.Count));
                bucketAt = bucketOffset + bucketLength;
            }

            expected = offset + length;
        }

        if (expected != indexOffset || at != index.Length)
        {
            throw new FormatException($"the blocks end at byte {expected} and the index entries at {at} of {index.Length}; the index begins at {indexOffset}");
        }

        return blocks;
    }
}
