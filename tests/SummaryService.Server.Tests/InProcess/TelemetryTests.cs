using System.Diagnostics;
using Grpc.Core;
using Microsoft.Extensions.DependencyInjection;
using OpenTelemetry;
using OpenTelemetry.Metrics;
using OpenTelemetry.Trace;
using SummaryService.Contract.V1;
using SummaryService.Server.Tests.Support;

namespace SummaryService.Server.Tests.InProcess;

/// <summary>Alone: OpenTelemetry listens to meters by name, so parallel test servers would add to the same figures.</summary>
[Collection(nameof(TelemetryTests))]
[CollectionDefinition(nameof(TelemetryTests), DisableParallelization = true)]
public sealed class TelemetryTests
{
    [Fact]
    public async Task Rpcs_are_traced_and_the_service_reports_its_own_figures()
    {
        var activities = new List<Activity>();
        var metrics = new List<Metric>();
        await using var server = new TestServer(services: services =>
        {
            services.ConfigureOpenTelemetryTracerProvider(tracing => tracing.AddInMemoryExporter(activities));
            services.ConfigureOpenTelemetryMeterProvider(meters => meters.AddInMemoryExporter(metrics));
        });

        await server.Ingest.PushAsync(Requests.Batch("shop.tel", [1, 2, 3, 4]));
        await Assert.ThrowsAsync<RpcException>(async () => await server.Ingest.PushAsync(Requests.Batch("shop.tel", [double.NaN])));
        await server.Query.SummarizeAsync(Requests.Summarize("shop.tel"));
        await server.Admin.WriteSnapshotAsync(new WriteSnapshotRequest());
        server.Services.GetRequiredService<MeterProvider>().ForceFlush();
        server.Services.GetRequiredService<TracerProvider>().ForceFlush();

        Assert.Contains(activities, a => a.DisplayName.Contains("summary.v1.Ingest/Push", StringComparison.Ordinal));
        Assert.Contains(activities, a => a.DisplayName.Contains("summary.v1.Query/Summarize", StringComparison.Ordinal));
        Assert.Equal(4, SumOf(metrics, "summary.ingest.values"));
        Assert.Equal(1, SumOf(metrics, "summary.ingest.rejected_batches", ("reason", "NonFiniteValue")));
        Assert.Contains(metrics, m => m.Name == "summary.query.duration");
        var queryTags = TagsOf(metrics, "summary.query.duration");
        Assert.Contains(("rpc.method", (object?)"Summarize"), queryTags); // OpenTelemetry semantic conventions for RPC: the method name under rpc.method
        Assert.DoesNotContain(queryTags, t => t.Key == "rpc");
        Assert.Contains(metrics, m => m.Name == "summary.store.snapshot.duration");
        Assert.Contains(metrics, m => m.Name == "summary.store.log_sync.duration");
        Assert.Equal(1, LastGauge(metrics, "summary.store.series"));
        Assert.Equal(1, LastGauge(metrics, "summary.store.buckets"));
    }

    private static long SumOf(List<Metric> metrics, string name, (string Key, string Value)? tag = null)
    {
        long total = 0;
        foreach (Metric metric in metrics.Where(m => m.Name == name))
        {
            foreach (ref readonly MetricPoint point in metric.GetMetricPoints())
            {
                bool matches = tag is null;
                foreach (var pair in point.Tags)
                {
                    matches |= tag is { } t && pair.Key == t.Key && Equals(pair.Value, t.Value);
                }

                if (matches)
                {
                    total = Math.Max(total, point.GetSumLong());
                }
            }
        }

        return total;
    }

    private static List<(string Key, object? Value)> TagsOf(List<Metric> metrics, string name)
    {
        var tags = new List<(string Key, object? Value)>();
        foreach (Metric metric in metrics.Where(m => m.Name == name))
        {
            foreach (ref readonly MetricPoint point in metric.GetMetricPoints())
            {
                foreach (var pair in point.Tags)
                {
                    tags.Add((pair.Key, pair.Value));
                }
            }
        }

        return tags;
    }

    private static long LastGauge(List<Metric> metrics, string name)
    {
        long value = -1;
        foreach (Metric metric in metrics.Where(m => m.Name == name))
        {
            foreach (ref readonly MetricPoint point in metric.GetMetricPoints())
            {
                value = point.GetGaugeLastValueLong();
            }
        }

        return value;
    }
}
