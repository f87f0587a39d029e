using System.Text;
using Grpc.Net.Client;
using SummaryService.Contract.V1;
using SummaryService.Server.Tests.Support;
using SummaryService.TestSupport;

namespace SummaryService.Server.Tests.EndToEnd;

/// <summary>With the standard OTLP endpoint variable set, the real process exports its traces and its own metrics.</summary>
[Collection(nameof(EndToEndTests))]
public sealed class OtlpExportTests
{
    [Fact]
    public async Task With_the_otlp_endpoint_set_traces_and_service_metrics_reach_the_collector()
    {
        await using var collector = await OtlpReceiver.StartAsync();
        using var data = new TempDirectory();

        // The variable names and values are those of the OpenTelemetry specification's exporter
        // configuration (OTEL_EXPORTER_OTLP_PROTOCOL, OTEL_METRIC_EXPORT_INTERVAL in ms, OTEL_BSP_SCHEDULE_DELAY in ms).
        await using var server = await ServerProcess.StartAsync(new Dictionary<string, string>
        {
            ["Persistence__DataDirectory"] = data.Path,
            ["OTEL_EXPORTER_OTLP_ENDPOINT"] = collector.Address.ToString().TrimEnd('/'),
            ["OTEL_EXPORTER_OTLP_PROTOCOL"] = "http/protobuf",
            ["OTEL_METRIC_EXPORT_INTERVAL"] = "300",
            ["OTEL_BSP_SCHEDULE_DELAY"] = "200",
        });
        using var channel = GrpcChannel.ForAddress(server.Address);
        await new Ingest.IngestClient(channel).PushAsync(Requests.Batch("ferry.otlp.latency", Requests.Latencies(50, 7)));
        await new Query.QueryClient(channel).SummarizeAsync(Requests.Summarize("ferry.otlp.latency"));

        // Protobuf writes strings as their UTF-8 bytes (protobuf encoding specification), so names
        // can be found in the export bodies without decoding the OTLP messages.
        string[] wantedInTraces = ["summary-service", "summary.v1.Ingest/Push", "summary.v1.Query/Summarize"];
        string[] wantedInMetrics = ["summary-service", "summary.ingest.values", "summary.query.duration", "summary.store.series"];
        for (int attempt = 0; attempt < 100 && !(HasAll("/v1/traces", wantedInTraces) && HasAll("/v1/metrics", wantedInMetrics)); attempt++)
        {
            await Task.Delay(100);
        }

        Assert.True(HasAll("/v1/traces", wantedInTraces), $"traces received: {collector.BodiesAt("/v1/traces").Count}, missing some of {string.Join(", ", wantedInTraces)}; paths {string.Join(", ", collector.Paths)}\n{server.Output}");
        Assert.True(HasAll("/v1/metrics", wantedInMetrics), $"metric exports received: {collector.BodiesAt("/v1/metrics").Count}, missing some of {string.Join(", ", wantedInMetrics)}");
        Assert.Contains("application/x-protobuf", collector.ContentTypes);

        bool HasAll(string path, string[] names)
        {
            string all = string.Join('\n', collector.BodiesAt(path).Select(b => Encoding.UTF8.GetString(b)));
            return names.All(n => all.Contains(n, StringComparison.Ordinal));
        }
    }
}
