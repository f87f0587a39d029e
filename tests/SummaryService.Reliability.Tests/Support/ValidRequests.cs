using System.Collections;
using Google.Protobuf;
using Google.Protobuf.Reflection;
using Google.Protobuf.WellKnownTypes;
using SummaryService.Contract.Otlp.Collector;
using SummaryService.Contract.Otlp.Metrics;
using SummaryService.Contract.V1;
using SummaryService.Formats.V1;
using SummaryService.Sketches;
using SummaryService.Sketches.Serialization;

namespace SummaryService.Reliability.Tests.Support;

/// <summary>
/// A well-formed request for any RPC, built from its descriptor by field names: every <c>metric</c>
/// set to the given one, a trailing hour for windows, a few values, a real sketch. RPCs added or
/// renamed later get a request without edits here (fields it does not know stay unset).
/// </summary>
internal static class ValidRequests
{
    /// <summary>The request, and whether it names a metric anywhere (false for store-wide operations).</summary>
    public static (IMessage Request, bool NamesMetric) For(MessageDescriptor type, string metric)
    {
        if (type.FullName == ExportMetricsServiceRequest.Descriptor.FullName)
        {
            return (OtlpExport(metric), true);
        }

        bool names = false;
        IMessage request = Build(type, metric, ref names);
        return (request, names);
    }

    private static IMessage Build(MessageDescriptor type, string metric, ref bool names)
    {
        var message = (IMessage)Activator.CreateInstance(type.ClrType)!;
        foreach (FieldDescriptor field in type.Fields.InDeclarationOrder())
        {
            if (field.RealContainingOneof is { } oneof && Preferred(oneof) != field)
            {
                continue;
            }

            object? value = field.Name switch
            {
                "metric" => metric,
                "max_updates" => 1u,
                "interval" => Duration.FromTimeSpan(TimeSpan.FromSeconds(1)),
                _ when field.FieldType == FieldType.Message && field.MessageType.FullName == Duration.Descriptor.FullName => Duration.FromTimeSpan(TimeSpan.FromHours(1)),
                _ when field.FieldType == FieldType.Message && field.MessageType.FullName == SeriesSketchState.Descriptor.FullName => Sketch(),
                _ when field.FieldType == FieldType.Message && !field.IsRepeated => Build(field.MessageType, metric, ref names),
                _ => null,
            };
            names |= field.Name == "metric";
            if (field.Name == "values" && field.IsRepeated)
            {
                ((IList)field.Accessor.GetValue(message)).Add(1.0);
            }
            else if (value is not null)
            {
                field.Accessor.SetValue(message, value);
            }
        }

        return message;
    }

    // Of a oneof, its duration member if it has one (a window's trailing "last"), else its first.
    private static FieldDescriptor Preferred(OneofDescriptor oneof) =>
        oneof.Fields.FirstOrDefault(f => f.FieldType == FieldType.Message && f.MessageType.FullName == Duration.Descriptor.FullName) ?? oneof.Fields[0];

    // An OTLP export names its metrics inside, where no field is called "metric": one gauge point now.
    private static ExportMetricsServiceRequest OtlpExport(string metric)
    {
        var point = new NumberDataPoint { TimeUnixNano = (ulong)DateTimeOffset.UtcNow.ToUnixTimeMilliseconds() * 1_000_000UL, AsDouble = 1 };
        var gauge = new Metric { Name = metric, Gauge = new Gauge { DataPoints = { point } } };
        return new ExportMetricsServiceRequest { ResourceMetrics = { new ResourceMetrics { ScopeMetrics = { new ScopeMetrics { Metrics = { gauge } } } } } };
    }

    private static SeriesSketchState Sketch()
    {
        var sketch = new SeriesSketch(SeriesSketchOptions.Default, seed: 7);
        sketch.Add([1.0, 2.0, 3.0]);
        return SketchCodec.ToState(sketch);
    }
}
