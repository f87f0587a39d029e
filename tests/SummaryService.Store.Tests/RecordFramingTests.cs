using System.Buffers.Binary;
using System.IO.Hashing;
using Google.Protobuf;
using SummaryService.Store.Persistence;
using SummaryService.Formats.Store;

namespace SummaryService.Store.Tests;

/// <summary>Records on disk are [u32 length][u32 CRC-32][payload], little-endian, whichever way they were written.</summary>
public class RecordFramingTests
{
    [Fact]
    public void A_message_framed_in_place_after_other_records_is_the_frame_of_its_bytes()
    {
        var first = new LogRecord { Lsn = 1, Metric = "checkout.latency", Producer = "web-1", Sequence = 7 };
        first.Values.Add([12.5, 13.25, 99.0]);
        first.TimesUnixMs.Add(1_800_000_000_000);
        var second = new LogRecord { Lsn = 2, Metric = "checkout.size", Producer = "web-1", Sequence = 8 };
        second.Values.Add(Enumerable.Range(0, 1000).Select(i => i * 0.5).ToArray());
        second.TimesUnixMs.Add(1_800_000_000_700);

        var inPlace = new MemoryStream();
        RecordFraming.Write(inPlace, first);
        RecordFraming.Write(inPlace, second);

        byte[] secondBytes = second.ToByteArray();
        byte[] expected = [.. Frame(first.ToByteArray()), .. Frame(secondBytes)];
        Assert.Equal(expected, inPlace.ToArray());
        Assert.Equal(inPlace.Length, inPlace.Position);

        var read = RecordFraming.ReadAll(inPlace.ToArray(), out long good, out string? stop);
        Assert.Null(stop);
        Assert.Equal(inPlace.Length, good);
        Assert.Equal(second, LogRecord.Parser.ParseFrom(read[1].Span));
    }

    // The frame written out by hand from the format's definition, not through the code under test.
    private static byte[] Frame(byte[] payload)
    {
        var frame = new byte[RecordFraming.HeaderBytes + payload.Length];
        BinaryPrimitives.WriteUInt32LittleEndian(frame, (uint)payload.Length);
        BinaryPrimitives.WriteUInt32LittleEndian(frame.AsSpan(4), Crc32.HashToUInt32(payload));
        payload.CopyTo(frame.AsSpan(RecordFraming.HeaderBytes));
        return frame;
    }
}
