using Google.Protobuf;
using SummaryService.Formats.Store;
using SummaryService.Store.Persistence;

namespace SummaryService.Store.Tests;

/// <summary>
/// The log record of a batch of values, encoded straight from the write, is byte for byte what the
/// protobuf library's own encoder makes of the same <c>LogRecord</c> message, so the generated
/// parser (and every older reader) reads it back unchanged.
/// </summary>
public class ValueRecordEncodingTests
{
    public static TheoryData<string> Shapes => ["one time", "runs of times", "a time per value", "negative and zero times", "no producer", "labels with non-ASCII values", "large lsn and sequence"];

    [Theory]
    [MemberData(nameof(Shapes))]
    public void The_encoding_is_the_protobuf_encoding_of_the_same_message(string shape)
    {
        LoggedWrite write = Write(shape);

        byte[] encoded = new byte[ValueRecordEncoding.Size(write, LogSegments.FormatVersion)];
        ValueRecordEncoding.Write(encoded, write, LogSegments.FormatVersion);

        LogRecord message = MessageOf(write);
        Assert.Equal(message.ToByteArray(), encoded);
        Assert.Equal(message, LogRecord.Parser.ParseFrom(encoded));
    }

    [Fact]
    public void A_framed_value_record_reads_back_as_the_write()
    {
        LoggedWrite write = Write("runs of times");
        var stream = new MemoryStream();
        RecordFraming.Write(stream, new LogRecord { Lsn = 1, Metric = "before" });
        RecordFraming.Write(stream, write, LogSegments.FormatVersion);

        var records = RecordFraming.ReadAll(stream.ToArray(), out long good, out string? stop);

        Assert.Null(stop);
        Assert.Equal(stream.Length, good);
        Assert.Equal(stream.Length, stream.Position);
        LogRecord read = LogRecord.Parser.ParseFrom(records[1].Span);
        Assert.Equal(write.Values, read.Values);
        Assert.Equal(write.TimesUnixMs, read.TimesUnixMs);
        Assert.Equal(write.Key, new SeriesKey(read.Metric, read.Labels));
        Assert.Equal((write.Producer, write.Sequence, write.Lsn), (read.Producer, read.Sequence, read.Lsn));
    }

    // The message built field by field with the generated type, as the log wrote it before.
    private static LogRecord MessageOf(LoggedWrite write)
    {
        var record = new LogRecord { Lsn = write.Lsn, Metric = write.Key.Metric, Producer = write.Producer, Sequence = write.Sequence, FormatVersion = LogSegments.FormatVersion };
        foreach (var (name, value) in write.Key.Labels)
        {
            record.Labels.Add(name, value);
        }

        record.Values.AddRange(write.Values);
        record.TimesUnixMs.AddRange(write.TimesUnixMs);
        return record;
    }

    private static LoggedWrite Write(string shape)
    {
        var random = new Random(17);
        double[] values = Enumerable.Range(0, 4096).Select(_ => Math.Exp(random.NextDouble() * 8) - 100).ToArray();
        const long Time = 1_800_000_005_000;
        var key = new SeriesKey("otterbyte.parcel.sort_ms", new Dictionary<string, string> { ["depot"] = "north", ["belt"] = "b7" });
        return shape switch
        {
            "one time" => new LoggedWrite(41, key, "sorter-3", 9, values[..100], [Time], null),
            "runs of times" => new LoggedWrite(42, key, "sorter-3", 10, values, Runs(values.Length, (1500, Time), (2778, Time + 10_000), (4096, Time + 20_000)), null),
            "a time per value" => new LoggedWrite(43, key, "sorter-3", 11, values[..500], Enumerable.Range(0, 500).Select(i => Time + (i * 7L)).ToArray(), null),
            "negative and zero times" => new LoggedWrite(44, key, "sorter-3", 12, values[..6], [-1, -1, 0, 0, long.MinValue, long.MaxValue], null),
            "no producer" => new LoggedWrite(45, new SeriesKey("otterbyte.parcel.weight_kg"), "", 0, values[..3], [Time], null),
            "labels with non-ASCII values" => new LoggedWrite(46, new SeriesKey("otterbyte.parcel.sort_ms", new Dictionary<string, string> { ["depot"] = "Zürich–Nord", ["belt"] = "帯7" }), "sorter-ü", 13, values[..50], [Time], null),
            "large lsn and sequence" => new LoggedWrite(ulong.MaxValue, key, "sorter-3", ulong.MaxValue - 1, values[..10], [Time], null),
            _ => throw new ArgumentOutOfRangeException(nameof(shape), shape, "unknown shape"),
        };
    }

    private static long[] Runs(int count, params (int End, long Time)[] runs)
    {
        var times = new long[count];
        int start = 0;
        foreach (var (end, time) in runs)
        {
            times.AsSpan(start, end - start).Fill(time);
            start = end;
        }

        return times;
    }
}
