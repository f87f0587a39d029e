using System.Buffers.Binary;
using System.Numerics;
using System.Runtime.InteropServices;
using System.Text;

namespace SummaryService.Store.Persistence;

/// <summary>
/// Writes the <c>LogRecord</c> of a batch of values straight from the accepted write, in the
/// protobuf wire format the message type defines (fields in field-number order, defaults left out,
/// the repeated fields packed), so readers decode it with the generated parser as before.
/// </summary>
/// <remarks>
/// Going through the generated message cost more than the sketch update on the back-fill path:
/// the values and times were copied into repeated fields, every time was sized and then written as
/// a varint one by one, and the message was walked twice. Here the values are one block copy (the
/// packed form of a double is its little-endian bytes), and each run of equal times, which is how
/// batches arrive, is encoded once and repeated by doubling copies. Uploaded sketches keep the
/// message path: they are rare and their state is a nested message.
/// </remarks>
internal static class ValueRecordEncoding
{
    private const byte LsnTag = (1 << 3) | 0;
    private const byte MetricTag = (2 << 3) | 2;
    private const byte LabelTag = (3 << 3) | 2;
    private const byte EntryKeyTag = (1 << 3) | 2;
    private const byte EntryValueTag = (2 << 3) | 2;
    private const byte ValuesTag = (4 << 3) | 2;
    private const byte TimesTag = (5 << 3) | 2;
    private const byte ProducerTag = (6 << 3) | 2;
    private const byte SequenceTag = (7 << 3) | 0;
    private const byte FormatVersionTag = (9 << 3) | 0;

    /// <summary>Bytes of the encoded record.</summary>
    public static int Size(LoggedWrite write, uint formatVersion)
    {
        int size = 0;
        if (write.Lsn != 0)
        {
            size += 1 + VarintSize(write.Lsn);
        }

        size += StringFieldSize(write.Key.Metric);
        foreach (var (name, value) in write.Key.Labels)
        {
            int entry = StringFieldSize(name) + StringFieldSize(value);
            size += 1 + VarintSize((ulong)entry) + entry;
        }

        size += PackedSize(write.Values.Length * sizeof(double));
        size += PackedSize(TimesSize(write.TimesUnixMs));
        size += StringFieldSize(write.Producer);
        if (write.Sequence != 0)
        {
            size += 1 + VarintSize(write.Sequence);
        }

        if (formatVersion != 0)
        {
            size += 1 + VarintSize(formatVersion);
        }

        return size;
    }

    /// <summary>Encodes the record into <paramref name="into"/>, which is exactly <see cref="Size"/> bytes long.</summary>
    public static void Write(Span<byte> into, LoggedWrite write, uint formatVersion)
    {
        if (write.Sketch is not null)
        {
            throw new ArgumentException("an uploaded sketch is logged through its message, not as values.", nameof(write));
        }

        int at = 0;
        if (write.Lsn != 0)
        {
            into[at++] = LsnTag;
            at += WriteVarint(into[at..], write.Lsn);
        }

        at += WriteStringField(into[at..], MetricTag, write.Key.Metric);
        foreach (var (name, value) in write.Key.Labels)
        {
            into[at++] = LabelTag;
            at += WriteVarint(into[at..], (ulong)(StringFieldSize(name) + StringFieldSize(value)));
            at += WriteStringField(into[at..], EntryKeyTag, name);
            at += WriteStringField(into[at..], EntryValueTag, value);
        }

        if (write.Values.Length > 0)
        {
            ReadOnlySpan<byte> values = MemoryMarshal.AsBytes(write.Values.AsSpan());
            at += WritePackedHeader(into[at..], ValuesTag, values.Length);
            if (BitConverter.IsLittleEndian)
            {
                values.CopyTo(into[at..]);
            }
            else
            {
                for (int i = 0; i < write.Values.Length; i++)
                {
                    BinaryPrimitives.WriteDoubleLittleEndian(into[(at + (i * sizeof(double)))..], write.Values[i]);
                }
            }

            at += values.Length;
        }

        if (write.TimesUnixMs.Length > 0)
        {
            at += WritePackedHeader(into[at..], TimesTag, TimesSize(write.TimesUnixMs));
            at += WriteTimes(into[at..], write.TimesUnixMs);
        }

        at += WriteStringField(into[at..], ProducerTag, write.Producer);
        if (write.Sequence != 0)
        {
            into[at++] = SequenceTag;
            at += WriteVarint(into[at..], write.Sequence);
        }

        if (formatVersion != 0)
        {
            into[at++] = FormatVersionTag;
            at += WriteVarint(into[at..], formatVersion);
        }

        if (at != into.Length)
        {
            throw new InvalidOperationException($"the log record took {at} bytes where {into.Length} were sized.");
        }
    }

    // int64 times are varints of their two's-complement bits: a negative time takes ten bytes.
    private static int TimesSize(ReadOnlySpan<long> times)
    {
        int size = 0;
        for (int at = 0; at < times.Length;)
        {
            int run = RunLength(times[at..]);
            size += run * VarintSize((ulong)times[at]);
            at += run;
        }

        return size;
    }

    private static int WriteTimes(Span<byte> into, ReadOnlySpan<long> times)
    {
        int written = 0;
        for (int at = 0; at < times.Length;)
        {
            int run = RunLength(times[at..]);
            int one = WriteVarint(into[written..], (ulong)times[at]);
            Span<byte> block = into.Slice(written, one * run);
            for (int filled = one; filled < block.Length; filled *= 2)
            {
                block[..Math.Min(filled, block.Length - filled)].CopyTo(block[filled..]);
            }

            written += block.Length;
            at += run;
        }

        return written;
    }

    // How many leading entries equal the first (a vectorized scan, not a per-value loop here).
    private static int RunLength(ReadOnlySpan<long> times)
    {
        int other = times[1..].IndexOfAnyExcept(times[0]);
        return other < 0 ? times.Length : other + 1;
    }

    private static int PackedSize(int bytes) => bytes == 0 ? 0 : 1 + VarintSize((ulong)bytes) + bytes;

    private static int WritePackedHeader(Span<byte> into, byte tag, int bytes)
    {
        into[0] = tag;
        return 1 + WriteVarint(into[1..], (ulong)bytes);
    }

    private static int StringFieldSize(string text)
    {
        if (text.Length == 0)
        {
            return 0;
        }

        int bytes = Encoding.UTF8.GetByteCount(text);
        return 1 + VarintSize((ulong)bytes) + bytes;
    }

    private static int WriteStringField(Span<byte> into, byte tag, string text)
    {
        if (text.Length == 0)
        {
            return 0;
        }

        into[0] = tag;
        int header = 1 + WriteVarint(into[1..], (ulong)Encoding.UTF8.GetByteCount(text));
        return header + Encoding.UTF8.GetBytes(text, into[header..]);
    }

    private static int VarintSize(ulong value) => Math.Max(1, (70 - BitOperations.LeadingZeroCount(value)) / 7);

    private static int WriteVarint(Span<byte> into, ulong value)
    {
        int at = 0;
        while (value >= 0x80)
        {
            into[at++] = (byte)(value | 0x80);
            value >>= 7;
        }

        into[at++] = (byte)value;
        return at;
    }
}
