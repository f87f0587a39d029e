using Google.Protobuf;
using SummaryService.Sketches.Moments;
using SummaryService.Sketches.Serialization;

namespace SummaryService.Sketches.Tests.SerializationTests;

/// <summary>
/// Bytes from clients and disk are untrusted: whatever they hold, Deserialize either returns a
/// sketch that works (summarizes, and round-trips to the same bytes) or throws
/// <see cref="SketchFormatException"/> — never a parser exception, an index error, an overflow or
/// anything else that would surface as a server fault.
/// </summary>
public class MalformedBytesTests
{
    [Fact]
    public void Bytes_that_are_not_a_protobuf_message_are_rejected_naming_the_message_type()
    {
        // 0xFF… is a varint that never ends: no protobuf parser can read it (protobuf encoding spec).
        byte[] garbage = Enumerable.Repeat((byte)0xFF, 16).ToArray();

        var ex = Assert.Throws<SketchFormatException>(() => SketchCodec.Deserialize(garbage));

        Assert.Contains("SeriesSketchState", ex.Message);
        Assert.IsType<InvalidProtocolBufferException>(ex.InnerException);
    }

    [Fact]
    public void No_bytes_at_all_are_rejected_for_their_missing_version()
    {
        // An empty message is valid protobuf whose every field is at its default: version 0.
        var ex = Assert.Throws<SketchFormatException>(() => SketchCodec.Deserialize([]));

        Assert.Contains("version", ex.Message);
    }

    [Fact]
    public void Another_message_type_is_rejected()
    {
        // A MomentState read as a SeriesSketchState: its count (field 1) lands in the version field
        // (4 values: a version no reader knows).
        var moments = new MomentSketch();
        moments.Add([1.0, 2.0, 3.0, 4.0]);
        byte[] bytes = SketchCodec.ToState(moments).ToByteArray();

        var ex = Assert.Throws<SketchFormatException>(() => SketchCodec.Deserialize(bytes));

        Assert.Contains("version", ex.Message);
    }

    [Fact]
    public void Random_garbage_is_rejected_or_parses_to_a_working_sketch()
    {
        var rng = new Random(2024);
        int rejected = 0;
        for (int trial = 0; trial < 2000; trial++)
        {
            var bytes = new byte[rng.Next(0, 200)];
            rng.NextBytes(bytes);
            rejected += MalformedInput.RejectsOrWorks(bytes, $"garbage trial {trial}") ? 1 : 0;
        }

        // Accepting would need version 1 and three mutually consistent parts by chance; with this
        // seed none does, so every trial exercised the rejection path.
        Assert.Equal(2000, rejected);
    }

    [Theory]
    [InlineData("one-value")]
    [InlineData("ten-values")]
    [InlineData("modes-count-min-phase")]
    [InlineData("small-k-many-levels")]
    public void Truncation_at_every_offset_is_rejected_or_parses_to_a_working_sketch(string name)
    {
        byte[] bytes = SketchCodec.Serialize(SketchCases.Build(name));
        int rejected = 0;
        for (int length = 0; length < bytes.Length; length++)
        {
            rejected += MalformedInput.RejectsOrWorks(bytes.AsSpan(0, length).ToArray(), $"{name} cut to {length} of {bytes.Length} bytes") ? 1 : 0;
        }

        // Every proper prefix loses at least the tail of the modes part, which comes last.
        Assert.Equal(bytes.Length, rejected);
    }

    [Theory]
    [InlineData("ten-values", 3000)]
    [InlineData("exact-200", 400)]
    [InlineData("compacted-100000", 200)]
    [InlineData("modes-exact-phase", 400)]
    [InlineData("resolution-count-min-phase", 400)]
    public void Single_bit_flips_are_rejected_or_parse_to_a_working_sketch(string name, int trials)
    {
        byte[] bytes = SketchCodec.Serialize(SketchCases.Build(name));
        var rng = new Random(name.Length * 7919);
        int rejected = 0;
        for (int trial = 0; trial < trials; trial++)
        {
            byte[] flipped = (byte[])bytes.Clone();
            int bit = rng.Next(flipped.Length * 8);
            flipped[bit / 8] ^= (byte)(1 << (bit % 8));
            rejected += MalformedInput.RejectsOrWorks(flipped, $"{name} with bit {bit} flipped") ? 1 : 0;
        }

        // Many flips land in the low bits of stored doubles and yield another valid state; many
        // others break the structure. Both outcomes must occur, or the trial is not testing anything.
        Assert.InRange(rejected, 1, trials - 1);
    }
}
