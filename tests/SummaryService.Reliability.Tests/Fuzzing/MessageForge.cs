using System.Collections;
using Google.Protobuf;
using Google.Protobuf.Reflection;
using Google.Protobuf.WellKnownTypes;
using SummaryService.Contract.V1;
using SummaryService.Formats.V1;
using SummaryService.Sketches;
using SummaryService.Sketches.Serialization;

namespace SummaryService.Reliability.Tests.Fuzzing;

/// <summary>
/// Builds random messages of any contract type from its descriptor. Field values lean towards what
/// the server accepts (a small pool of metric and label names, finite values, recent times, real
/// sketches) so that a good share of messages gets past validation into the store and the query
/// paths; the rest carries the awkward values (NaN, control characters, huge counts, negative
/// durations) that the edges must refuse cleanly.
/// </summary>
internal sealed class MessageForge(Random random, long nowMs, IReadOnlyList<string> metrics)
{
    /// <summary>Metrics the ingest and query RPCs use; the accepted-data ledger follows them.</summary>
    public static readonly string[] Metrics = ["fuzz.alpha", "fuzz.beta", "fuzz.gamma", "fuzz.delta"];

    /// <summary>
    /// Metrics the admin RPCs use, apart from the ledger's, so that a removal the fuzzer provokes
    /// (the admin service may delete series) cannot make the final comparison ambiguous.
    /// </summary>
    public static readonly string[] AdminMetrics = ["fuzzadmin.alpha", "fuzzadmin.beta"];

    /// <summary>The metric pool for an RPC: the admin service's own, or the ledger's.</summary>
    public static IReadOnlyList<string> MetricsFor(ContractMethod method) => method.Descriptor.Service.Name == "Admin" ? AdminMetrics : Metrics;

    private static readonly string[] LabelNames = ["host", "region", "zone", "code"];
    private static readonly string[] LabelValues = ["a", "b", "c", "north"];
    private static readonly string[] Awkward = ["", " ", "x\u0000y", "line\nbreak", "tab\there", "ünïcödé", "\u202Eright-to-left", "emoji 🦦", "a\u007Fb", "quote\"s", "%41", "\r\n", new string('m', 300), "\uFFFD"];
    private const int MaxDepth = 5;

    // Nested messages per top-level message. Repeated fields nest five deep in an OTLP export, so
    // without a cap one forged export holds thousands of points and takes as long as hundreds of
    // other messages; past the cap, repeated message fields get no more elements.
    private const int MaxNestedMessages = 2_000;

    private int _nestedLeft;

    /// <summary>A random message of the given type.</summary>
    public IMessage Build(MessageDescriptor descriptor)
    {
        _nestedLeft = MaxNestedMessages;
        return Build(descriptor, depth: 0, fieldName: "");
    }

    private IMessage Build(MessageDescriptor descriptor, int depth, string fieldName)
    {
        if (descriptor.FullName == Duration.Descriptor.FullName)
        {
            return DurationValue(fieldName);
        }

        if (descriptor.FullName == SeriesSketchState.Descriptor.FullName && Chance(0.7))
        {
            return RealSketch();
        }

        var message = (IMessage)Activator.CreateInstance(descriptor.ClrType)!;
        _nestedLeft--;
        if (depth > MaxDepth)
        {
            return message;
        }

        var oneofsSet = new HashSet<string>(StringComparer.Ordinal);
        foreach (FieldDescriptor field in descriptor.Fields.InDeclarationOrder())
        {
            if (field.RealContainingOneof is { } oneof && !oneofsSet.Add(oneof.Name))
            {
                continue;
            }

            if (!Chance(PresenceOf(field)))
            {
                if (field.RealContainingOneof is { } unset)
                {
                    oneofsSet.Remove(unset.Name);
                }

                continue;
            }

            if (field.IsMap)
            {
                var map = (IDictionary)field.Accessor.GetValue(message);
                int entries = random.Next(0, 4);
                for (int i = 0; i < entries; i++)
                {
                    object key = Scalar(field.MessageType.FindFieldByNumber(1), "key");
                    map[key] = Value(field.MessageType.FindFieldByNumber(2), depth, "value");
                }
            }
            else if (field.IsRepeated)
            {
                var list = (IList)field.Accessor.GetValue(message);
                int count = Chance(0.05) ? random.Next(50, 400) : random.Next(0, 12);
                for (int i = 0; i < count && (field.FieldType != FieldType.Message || _nestedLeft > 0); i++)
                {
                    list.Add(Value(field, depth, field.Name));
                }
            }
            else
            {
                field.Accessor.SetValue(message, Value(field, depth, field.Name));
            }
        }

        return message;
    }

    private object Value(FieldDescriptor field, int depth, string name) =>
        field.FieldType == FieldType.Message ? Build(field.MessageType, depth + 1, name) : Scalar(field, name);

    // Fields a request needs to get anywhere are usually present; the rest half the time.
    private static double PresenceOf(FieldDescriptor field) => field.Name switch
    {
        "metric" or "selector" or "window" or "values" or "sketch" or "query" or "a" or "b" or "step" or "last" or "range" => 0.9,
        _ => 0.45,
    };

    private object Scalar(FieldDescriptor field, string name) => field.FieldType switch
    {
        FieldType.Double => Number(name),
        FieldType.Float => (float)Number(name),
        FieldType.Int64 or FieldType.SInt64 or FieldType.SFixed64 => Int64(name),
        FieldType.UInt64 or FieldType.Fixed64 => UInt64(),
        FieldType.Int32 or FieldType.SInt32 or FieldType.SFixed32 => Chance(0.8) ? random.Next(-2, 20) : random.Next(int.MinValue, int.MaxValue),
        FieldType.UInt32 or FieldType.Fixed32 => Chance(0.8) ? (uint)random.Next(0, 20) : (uint)random.NextInt64(0, uint.MaxValue),
        FieldType.Bool => Chance(0.5),
        FieldType.String => Text(name),
        FieldType.Bytes => ByteString.CopyFrom(RandomBytes(random.Next(0, 16))),
        FieldType.Enum => System.Enum.ToObject(field.EnumType.ClrType, Chance(0.8) ? field.EnumType.Values[random.Next(field.EnumType.Values.Count)].Number : random.Next(-5, 50)),
        _ => throw new NotSupportedException($"field type {field.FieldType} of {field.FullName}"),
    };

    private string Text(string name)
    {
        if (Chance(0.15))
        {
            return Awkward[random.Next(Awkward.Length)];
        }

        return name switch
        {
            "metric" => Chance(0.85) ? metrics[random.Next(metrics.Count)] : $"{metrics[0]}{random.Next(100)}",
            "key" or "group_by" => LabelNames[random.Next(LabelNames.Length)],
            "value" => LabelValues[random.Next(LabelValues.Length)],
            "producer" => Chance(0.5) ? "" : $"producer-{random.Next(4)}",
            _ => $"text{random.Next(10)}",
        };
    }

    // Quarter-integer values: every partial sum is exact in binary floating point, so the ledger's
    // totals can be compared exactly whatever order the server adds them in.
    private double Number(string name)
    {
        if (Chance(0.08))
        {
            double[] special = [double.NaN, double.PositiveInfinity, double.NegativeInfinity, double.MaxValue, -double.MaxValue, double.Epsilon, -0.0, 1e-300];
            return special[random.Next(special.Length)];
        }

        return name switch
        {
            "quantiles" or "confidence" => Math.Round((random.NextDouble() * 1.4) - 0.2, 3),
            "values" => random.Next(-4000, 4000) / 4.0,
            _ => random.Next(-1000, 1000) / 4.0,
        };
    }

    private long Int64(string name)
    {
        if (name.EndsWith("unix_ms", StringComparison.Ordinal))
        {
            return random.Next(10) switch
            {
                < 4 => 0,
                < 8 => nowMs - random.NextInt64(0, 3 * 3_600_000),
                8 => nowMs + random.NextInt64(0, 600_000),
                _ => random.NextInt64(long.MinValue, long.MaxValue),
            };
        }

        return Chance(0.8) ? random.Next(-5, 100) : random.NextInt64(long.MinValue, long.MaxValue);
    }

    private ulong UInt64() => Chance(0.8) ? (ulong)random.Next(0, 1000) : (ulong)random.NextInt64(long.MinValue, long.MaxValue);

    private Duration DurationValue(string name) => random.Next(10) switch
    {
        < 7 => new Duration { Seconds = name is "interval" ? random.Next(0, 2) : random.Next(1, 7200), Nanos = random.Next(0, 4) * 250_000_000 },
        7 => new Duration { Seconds = -random.Next(0, 100) },
        8 => new Duration { Seconds = random.NextInt64(long.MinValue, long.MaxValue), Nanos = random.Next(int.MinValue, int.MaxValue) },
        _ => new Duration(),
    };

    private SeriesSketchState RealSketch()
    {
        var sketch = new SeriesSketch(SeriesSketchOptions.Default, seed: (ulong)random.NextInt64());
        int count = random.Next(1, 300);
        for (int i = 0; i < count; i++)
        {
            sketch.Add(random.Next(-4000, 4000) / 4.0);
        }

        return SketchCodec.ToState(sketch);
    }

    private byte[] RandomBytes(int length)
    {
        var bytes = new byte[length];
        random.NextBytes(bytes);
        return bytes;
    }

    private bool Chance(double probability) => random.NextDouble() < probability;
}
