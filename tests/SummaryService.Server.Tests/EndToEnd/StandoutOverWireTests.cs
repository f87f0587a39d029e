using System.Net;
using System.Text.Json.Nodes;
using Grpc.Core;
using Grpc.Net.Client;
using MathNet.Numerics.Statistics;
using SummaryService.Contract.V1;
using SummaryService.Server.Tests.Json;
using SummaryService.Server.Tests.Support;

namespace SummaryService.Server.Tests.EndToEnd;

/// <summary>Query.Standout on the real server process: JSON over HTTP/1.1 and gRPC over HTTP/2 agree.</summary>
[Collection(nameof(EndToEndTests))]
public sealed class StandoutOverWireTests(JsonOverHttpTests.OneProcess process) : IClassFixture<JsonOverHttpTests.OneProcess>
{
    [Fact]
    public async Task The_slow_hub_is_ranked_first_over_json_and_over_grpc_alike()
    {
        HttpClient http = process.Http;

        // Ten parcel hubs; at hub-04 the slowest 5% of label prints take twice as long.
        for (int h = 0; h < 10; h++)
        {
            double[] values = Requests.Latencies(3000, 800 + h);
            double cut = values.Quantile(0.95); // MathNet.Numerics
            double[] sent = h == 4 ? [.. values.Select(v => v > cut ? v * 2 : v)] : values;
            using var pushed = await http.PostAsync("/v1/push", new { metric = "parcel.label.print", labels = new Dictionary<string, string> { ["hub"] = $"hub-{h:D2}" }, values = sent });
            Assert.Equal(HttpStatusCode.OK, pushed.StatusCode);
        }

        using var answered = await http.PostAsync("/v1/standout", new
        {
            selector = new { metric = "parcel.label.print" },
            splitBy = "hub",
            window = new { last = "3600s" },
            measure = "STANDOUT_MEASURE_QUANTILE_RATIO",
        });
        Assert.Equal(HttpStatusCode.OK, answered.StatusCode);
        JsonNode json = await answered.ReadJsonAsync();
        JsonNode first = json["ranked"]![0]!;
        Assert.Equal("hub-04", first["value"]!.GetValue<string>());
        Assert.True(first["significant"]!.GetValue<bool>());
        Assert.Equal(3000, first["count"].Number());
        Assert.Equal(9 * 3000, first["restCount"].Number());
        Assert.Equal(9, first["restSeriesMerged"].Number());
        Assert.Equal(10, json["ranked"]!.AsArray().Count);

        using GrpcChannel channel = GrpcChannel.ForAddress(process.Server.Address);
        StandoutReply reply = await new Query.QueryClient(channel).StandoutAsync(new StandoutRequest
        {
            Selector = Requests.Selector("parcel.label.print"),
            SplitBy = "hub",
            Window = Requests.Last(TimeSpan.FromHours(1)),
            Measure = StandoutMeasure.QuantileRatio,
        });
        Assert.Equal(json["ranked"]!.AsArray().Select(g => g!["value"]!.GetValue<string>()), reply.Ranked.Select(g => g.Value));
        Assert.Equal(first["strength"].Number(), reply.Ranked[0].Strength, 1e-12);
    }

    [Fact]
    public async Task An_unknown_label_is_refused_over_json_and_over_grpc_naming_it()
    {
        HttpClient http = process.Http;
        using (var pushed = await http.PostAsync("/v1/push", new { metric = "parcel.label.misread", labels = new Dictionary<string, string> { ["hub"] = "hub-01" }, values = new[] { 1.0, 2.0 } }))
        {
            Assert.Equal(HttpStatusCode.OK, pushed.StatusCode);
        }

        using var refused = await http.PostAsync("/v1/standout", new { selector = new { metric = "parcel.label.misread" }, splitBy = "belt", window = new { last = "3600s" } });
        Assert.Equal(HttpStatusCode.BadRequest, refused.StatusCode);
        Assert.Contains("split_by is 'belt'", await refused.Content.ReadAsStringAsync(), StringComparison.Ordinal);

        using GrpcChannel channel = GrpcChannel.ForAddress(process.Server.Address);
        var ex = await Assert.ThrowsAsync<RpcException>(async () => await new Query.QueryClient(channel).StandoutAsync(new StandoutRequest
        {
            Selector = Requests.Selector("parcel.label.misread"),
            SplitBy = "belt",
            Window = Requests.Last(TimeSpan.FromHours(1)),
        }));
        Assert.Equal(StatusCode.InvalidArgument, ex.StatusCode);
        Assert.Contains("split_by is 'belt'", ex.Status.Detail, StringComparison.Ordinal);
    }
}
