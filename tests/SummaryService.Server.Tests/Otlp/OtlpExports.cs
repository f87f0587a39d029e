using SummaryService.Contract.Otlp.Collector;
using SummaryService.Contract.Otlp.Common;
using SummaryService.Contract.Otlp.Metrics;

namespace SummaryService.Server.Tests.Otlp;

/// <summary>Hand-built OTLP exports from one resource of Otterbyte Parcels' hub.</summary>
internal static class OtlpExports
{
    /// <summary>The current time in Unix nanoseconds, to the millisecond.</summary>
    public static ulong Now => (ulong)DateTimeOffset.UtcNow.ToUnixTimeMilliseconds() * 1_000_000UL;

    /// <summary>An export of the metrics from the hub's resource and scope.</summary>
    public static ExportMetricsServiceRequest Request(params Metric[] metrics) => new()
    {
        ResourceMetrics =
        {
            new ResourceMetrics
            {
                Resource = new Contract.Otlp.Resource.Resource { Attributes = { new KeyValue { Key = "service.name", Value = new AnyValue { StringValue = "otterbyte-hub" } } } },
                ScopeMetrics = { new ScopeMetrics { Scope = new InstrumentationScope { Name = "hub" }, Metrics = { metrics } } },
            },
        },
    };

    /// <summary>A gauge of one point, now.</summary>
    public static Metric Gauge(string name, double value) =>
        new() { Name = name, Gauge = new Gauge { DataPoints = { new NumberDataPoint { TimeUnixNano = Now, AsDouble = value } } } };
}
