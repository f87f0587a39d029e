using System.IO.Hashing;
using System.Text;
using Google.Protobuf.Collections;
using SummaryService.Contract.Otlp.Common;

namespace SummaryService.Server.Otlp;

/// <summary>
/// The identity of an OpenTelemetry stream as the data model defines it: the whole resource, the
/// instrumentation scope, the metric name and the point's attributes. Labels keep only some resource
/// attributes, so two instances may feed one series; their cumulative sums must still be told apart,
/// hence a 128-bit hash of everything rather than the series key.
/// </summary>
public static class StreamIdentity
{
    /// <summary>The canonical bytes of a resource and scope: attributes sorted by key, every text length-prefixed.</summary>
    public static byte[] PrefixOf(RepeatedField<KeyValue>? resourceAttributes, InstrumentationScope? scope)
    {
        using var bytes = new MemoryStream();
        using (var writer = new BinaryWriter(bytes, Encoding.UTF8, leaveOpen: true))
        {
            WriteAttributes(writer, resourceAttributes);
            writer.Write(scope?.Name ?? "");
            writer.Write(scope?.Version ?? "");
        }

        return bytes.ToArray();
    }

    /// <summary>The stream of one point.</summary>
    public static UInt128 Of(byte[] prefix, string metric, RepeatedField<KeyValue> pointAttributes)
    {
        ArgumentNullException.ThrowIfNull(prefix);
        using var bytes = new MemoryStream();
        using (var writer = new BinaryWriter(bytes, Encoding.UTF8, leaveOpen: true))
        {
            writer.Write(prefix);
            writer.Write(metric);
            WriteAttributes(writer, pointAttributes);
        }

        return XxHash128.HashToUInt128(bytes.GetBuffer().AsSpan(0, (int)bytes.Length));
    }

    private static void WriteAttributes(BinaryWriter writer, RepeatedField<KeyValue>? attributes)
    {
        var sorted = (attributes ?? []).OrderBy(a => a.Key, StringComparer.Ordinal).ToArray();
        writer.Write(sorted.Length);
        foreach (KeyValue attribute in sorted)
        {
            writer.Write(attribute.Key);
            writer.Write((int)(attribute.Value?.ValueCase ?? AnyValue.ValueOneofCase.None));
            writer.Write(AttributeLabels.TextOf(attribute.Value));
        }
    }
}
