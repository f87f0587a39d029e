using SummaryService.Sketches;
using SummaryService.Sketches.Serialization;
using SummaryService.Store.Persistence;
using SummaryService.Store.Segments;
using SummaryService.TestSupport;

namespace SummaryService.Store.Tests.Segments;

/// <summary>
/// A segment file gives back exactly the buckets written into it, found through its index, and a
/// damaged one — cut at any length or hit by a bit flip anywhere — is refused with its file name,
/// never read as something else and never a crash.
/// </summary>
public sealed class SegmentFileTests : IDisposable
{
    private const long Width = 10_000;
    private const long Start = 1_800_000_000_000;
    private readonly TempDirectory _dir = new();

    public void Dispose() => _dir.Dispose();

    [Fact]
    public void Buckets_come_back_byte_for_byte_in_series_order_with_their_index_figures()
    {
        var series = ThreeSeries(bucketsEach: 5);
        SegmentInfo info = Write(series, out var locations);

        using SegmentReader reader = SegmentReader.Open(Path.Combine(_dir.Path, info.FileName));

        Assert.Equal(info, reader.Info);
        Assert.Equal(Start, reader.Info.FromMs);
        Assert.Equal(Start + (5 * Width), reader.Info.ToMs);
        Assert.Equal(series.Select(s => s.Key), reader.Blocks.Select(b => b.Key));
        for (int s = 0; s < series.Count; s++)
        {
            var read = reader.ReadBlock(s);
            Assert.Equal(series[s].Buckets.Select(b => b.StartMs), read.Select(b => b.StartMs));
            for (int b = 0; b < read.Count; b++)
            {
                // The sketch's own encoding is the reference: a bucket read back is the bucket written.
                Assert.Equal(SketchCodec.Serialize(series[s].Buckets[b].Sketch), SketchCodec.Serialize(read[b].Sketch));
                Assert.Equal(SketchCodec.Serialize(series[s].Buckets[b].Sketch), SketchCodec.Serialize(reader.ReadBucket(locations[s][b])));
            }

            Assert.Equal(series[s].Buckets.Sum(b => b.Sketch.Count), reader.Blocks[s].Values);
        }
    }

    [Fact]
    public void A_long_series_is_cut_into_blocks_so_a_narrow_read_checks_only_its_own()
    {
        var series = new List<(SeriesKey Key, List<(long StartMs, SeriesSketch Sketch)> Buckets)> { (new SeriesKey("parcels.scan.latency"), Buckets(new Random(5), 1000, valuesEach: 3)) };

        SegmentInfo info = Write(series, out _);

        using SegmentReader reader = SegmentReader.Open(Path.Combine(_dir.Path, info.FileName));
        Assert.Equal([360, 360, 280], reader.Blocks.Select(b => b.Buckets));
        Assert.Equal(Start + (360 * Width), reader.Blocks[1].FirstStartMs);
        Assert.Equal(1000 * 3, reader.Blocks.Sum(b => b.Values));
    }

    [Fact]
    public void Series_out_of_order_are_refused_when_added()
    {
        var writer = new SegmentWriter(0, 0, Width);
        writer.Add(new SeriesKey("parcels.b"), Buckets(new Random(1), 1, 1));

        var ex = Assert.Throws<ArgumentException>(() => writer.Add(new SeriesKey("parcels.a"), Buckets(new Random(1), 1, 1)));
        Assert.Contains("parcels.a", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void A_file_cut_at_any_length_is_refused_with_its_name()
    {
        SegmentInfo info = Write(ThreeSeries(bucketsEach: 2), out _);
        string path = Path.Combine(_dir.Path, info.FileName);
        byte[] whole = File.ReadAllBytes(path);

        for (int cut = 0; cut < whole.Length; cut++)
        {
            File.WriteAllBytes(path, whole[..cut]);
            var ex = Assert.Throws<SegmentDamagedException>(() => OpenAndReadAll(path));
            Assert.Equal(info.FileName, ex.FileName);
            Assert.Contains(info.FileName, ex.Message, StringComparison.Ordinal);
        }
    }

    [Fact]
    public void A_bit_flipped_anywhere_is_caught_by_a_checksum_and_names_the_file()
    {
        SegmentInfo info = Write(ThreeSeries(bucketsEach: 2), out _);
        string path = Path.Combine(_dir.Path, info.FileName);
        byte[] whole = File.ReadAllBytes(path);
        var rng = new Random(23);

        for (int at = 0; at < whole.Length; at++)
        {
            byte[] damaged = (byte[])whole.Clone();
            damaged[at] ^= (byte)(1 << rng.Next(8));
            File.WriteAllBytes(path, damaged);
            var ex = Assert.Throws<SegmentDamagedException>(() => OpenAndReadAll(path));
            Assert.Equal(info.FileName, ex.FileName);
        }
    }

    [Fact]
    public void A_damaged_block_costs_only_that_block()
    {
        var series = ThreeSeries(bucketsEach: 3);
        SegmentInfo info = Write(series, out _);
        string path = Path.Combine(_dir.Path, info.FileName);
        SegmentBlock middle;
        using (SegmentReader intact = SegmentReader.Open(path))
        {
            middle = intact.Blocks[1];
        }

        byte[] bytes = File.ReadAllBytes(path);
        bytes[middle.Offset + (middle.Length / 2)] ^= 0x10;
        File.WriteAllBytes(path, bytes);

        using SegmentReader reader = SegmentReader.Open(path);
        var ex = Assert.Throws<SegmentDamagedException>(() => reader.ReadBlock(1));
        Assert.Contains("block 1", ex.Message, StringComparison.Ordinal);
        Assert.Equal(3, reader.ReadBlock(0).Count);
        Assert.Equal(3, reader.ReadBlock(2).Count);
    }

    [Fact]
    public void A_segment_appears_only_once_complete()
    {
        SegmentInfo info = Write(ThreeSeries(bucketsEach: 1), out _);

        Assert.Equal([info.FileName], Directory.EnumerateFiles(_dir.Path).Select(Path.GetFileName));
        Assert.EndsWith(SegmentLayout.Extension, info.FileName, StringComparison.Ordinal);
    }

    private static void OpenAndReadAll(string path)
    {
        using SegmentReader reader = SegmentReader.Open(path);
        reader.VerifyAll();
    }

    private SegmentInfo Write(List<(SeriesKey Key, List<(long StartMs, SeriesSketch Sketch)> Buckets)> series, out List<IReadOnlyList<BucketLocation>> locations)
    {
        var writer = new SegmentWriter(shard: 3, tier: 1, Width);
        locations = [.. series.Select(s => writer.Add(s.Key, s.Buckets))];
        return writer.WriteTo(new LocalDataFiles(), _dir.Path, number: 1);
    }

    private static List<(SeriesKey Key, List<(long StartMs, SeriesSketch Sketch)> Buckets)> ThreeSeries(int bucketsEach)
    {
        var rng = new Random(17);
        return
        [
            .. new[] { "parcels.sort.wait", "parcels.scan.latency", "parcels.route.length" }
                .Select(m => new SeriesKey(m, [new("depot", "north")]))
                .OrderBy(k => k.Canonical, StringComparer.Ordinal)
                .Select(k => (k, Buckets(rng, bucketsEach, valuesEach: 4))),
        ];
    }

    private static List<(long StartMs, SeriesSketch Sketch)> Buckets(Random rng, int count, int valuesEach)
    {
        var buckets = new List<(long, SeriesSketch)>();
        for (int i = 0; i < count; i++)
        {
            var sketch = new SeriesSketch(seed: (ulong)i);
            sketch.Add(Enumerable.Range(0, valuesEach).Select(_ => rng.NextDouble() * 100).ToArray());
            sketch.Compact();
            buckets.Add((Start + (i * Width), sketch));
        }

        return buckets;
    }
}
