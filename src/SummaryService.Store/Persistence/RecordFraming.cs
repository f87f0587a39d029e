using System.Buffers.Binary;
using System.IO.Hashing;
using Google.Protobuf;

namespace SummaryService.Store.Persistence;

/// <summary>
/// Frames records as [u32 length][u32 CRC-32][payload], little-endian, so a reader can tell a
/// complete record from a torn or damaged one and stop at the last good byte.
/// </summary>
internal static class RecordFraming
{
    public const int HeaderBytes = 8;

    /// <summary>Longest payload accepted; a damaged length field must not make the reader allocate gigabytes.</summary>
    public const int MaxPayloadBytes = 256 << 20;

    public static void Write(Stream stream, ReadOnlySpan<byte> payload)
    {
        Span<byte> header = stackalloc byte[HeaderBytes];
        WriteHeader(header, payload);
        stream.Write(header);
        stream.Write(payload);
    }

    /// <summary>
    /// Frames a message at the end of a memory stream, serializing it in place: no payload array per
    /// record, which matters on the log's path, where every batch is one record.
    /// </summary>
    public static void Write(MemoryStream stream, IMessage message)
    {
        Span<byte> framed = Extend(stream, message.CalculateSize());
        Span<byte> payload = framed[HeaderBytes..];
        message.WriteTo(payload);
        WriteHeader(framed, payload);
    }

    /// <summary>Frames the record of a batch of values, encoded in place by <see cref="ValueRecordEncoding"/>.</summary>
    public static void Write(MemoryStream stream, LoggedWrite values, uint formatVersion)
    {
        Span<byte> framed = Extend(stream, ValueRecordEncoding.Size(values, formatVersion));
        Span<byte> payload = framed[HeaderBytes..];
        ValueRecordEncoding.Write(payload, values, formatVersion);
        WriteHeader(framed, payload);
    }

    // Room for one more frame at the end of the stream, which is left positioned after it.
    private static Span<byte> Extend(MemoryStream stream, int payloadLength)
    {
        int start = checked((int)stream.Length);
        stream.SetLength(start + HeaderBytes + payloadLength);
        stream.Position = stream.Length;
        return stream.GetBuffer().AsSpan(start, HeaderBytes + payloadLength);
    }

    private static void WriteHeader(Span<byte> header, ReadOnlySpan<byte> payload)
    {
        BinaryPrimitives.WriteUInt32LittleEndian(header, (uint)payload.Length);
        BinaryPrimitives.WriteUInt32LittleEndian(header[4..], Crc32.HashToUInt32(payload));
    }

    /// <summary>
    /// Reads framed records from <paramref name="data"/> until its end or the first record that is
    /// incomplete or fails its CRC. <paramref name="goodLength"/> is the offset just past the last good record.
    /// </summary>
    public static List<ReadOnlyMemory<byte>> ReadAll(ReadOnlyMemory<byte> data, out long goodLength, out string? stopReason)
    {
        var records = new List<ReadOnlyMemory<byte>>();
        int offset = 0;
        stopReason = null;
        ReadOnlySpan<byte> span = data.Span;
        while (offset < span.Length)
        {
            if (span.Length - offset < HeaderBytes)
            {
                stopReason = $"torn record header at byte {offset}";
                break;
            }

            uint length = BinaryPrimitives.ReadUInt32LittleEndian(span[offset..]);
            uint crc = BinaryPrimitives.ReadUInt32LittleEndian(span[(offset + 4)..]);
            if (length > MaxPayloadBytes || length > span.Length - offset - HeaderBytes)
            {
                stopReason = length > MaxPayloadBytes ? $"implausible record length {length} at byte {offset}" : $"torn record at byte {offset} (needs {length} bytes, {span.Length - offset - HeaderBytes} left)";
                break;
            }

            ReadOnlySpan<byte> payload = span.Slice(offset + HeaderBytes, (int)length);
            if (Crc32.HashToUInt32(payload) != crc)
            {
                stopReason = $"CRC mismatch in record at byte {offset}";
                break;
            }

            records.Add(data.Slice(offset + HeaderBytes, (int)length));
            offset += HeaderBytes + (int)length;
        }

        goodLength = offset;
        return records;
    }
}
