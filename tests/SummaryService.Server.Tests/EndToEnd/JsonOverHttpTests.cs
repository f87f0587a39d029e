using System.Net;
using Grpc.Net.Client;
using MathNet.Numerics.Statistics;
using SummaryService.Contract.V1;
using SummaryService.Server.Tests.Json;
using SummaryService.Server.Tests.Support;
using SummaryService.TestSupport;

namespace SummaryService.Server.Tests.EndToEnd;

/// <summary>The real process: JSON on its HTTP/1.1 endpoint while gRPC keeps its HTTP/2 endpoint.</summary>
[Collection(nameof(EndToEndTests))]
public sealed class JsonOverHttpTests
{
    [Fact]
    public async Task Json_pushed_over_http1_is_summarized_over_json_and_over_grpc()
    {
        using var data = new TempDirectory();
        await using var server = await ServerProcess.StartAsync(new Dictionary<string, string> { ["Persistence__DataDirectory"] = data.Path });
        using var http = new HttpClient { BaseAddress = server.HttpAddress, DefaultRequestVersion = HttpVersion.Version11, Timeout = TimeSpan.FromSeconds(20) };
        double[] values = Requests.Latencies(80, 95);

        using var pushed = await http.PostAsync("/v1/push", new { metric = "shop.e2e.json", values });
        Assert.Equal(HttpStatusCode.OK, pushed.StatusCode);
        Assert.Equal(HttpVersion.Version11, pushed.Version);

        using var answered = await http.PostAsync("/v1/summarize", new { selector = new { metric = "shop.e2e.json" }, window = new { last = "3600s" } });
        var summary = (await answered.ReadJsonAsync())["groups"]![0]!["summary"]!;
        Assert.Equal(values.Mean(), summary["mean"].Number(), 1e-9); // MathNet.Numerics
        Assert.Equal(values.StandardDeviation(), summary["stddev"].Number(), 1e-9); // MathNet.Numerics (sample standard deviation)

        using GrpcChannel channel = GrpcChannel.ForAddress(server.Address);
        var reply = await new Query.QueryClient(channel).SummarizeAsync(Requests.Summarize("shop.e2e.json"));
        Assert.Equal(80ul, Assert.Single(reply.Groups).Summary.Count);
    }
}
