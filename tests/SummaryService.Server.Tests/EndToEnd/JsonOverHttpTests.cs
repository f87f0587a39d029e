using System.Net;
using System.Text.Json;
using System.Text.Json.Nodes;
using Grpc.Net.Client;
using MathNet.Numerics.Statistics;
using SummaryService.Contract.V1;
using SummaryService.Server.Tests.Json;
using SummaryService.Server.Tests.Support;
using SummaryService.TestSupport;

namespace SummaryService.Server.Tests.EndToEnd;

/// <summary>The real process: JSON on its HTTP/1.1 endpoint while gRPC keeps its HTTP/2 endpoint.</summary>
/// <remarks>One process serves every test here; each test uses metrics of its own.</remarks>
[Collection(nameof(EndToEndTests))]
public sealed class JsonOverHttpTests(JsonOverHttpTests.OneProcess process) : IClassFixture<JsonOverHttpTests.OneProcess>
{
    [Fact]
    public async Task Json_pushed_over_http1_is_summarized_over_json_and_over_grpc()
    {
        HttpClient http = process.Http;
        double[] values = Requests.Latencies(80, 95);

        using var pushed = await http.PostAsync("/v1/push", new { metric = "shop.e2e.json", values });
        Assert.Equal(HttpStatusCode.OK, pushed.StatusCode);
        Assert.Equal(HttpVersion.Version11, pushed.Version);

        using var answered = await http.PostAsync("/v1/summarize", new { selector = new { metric = "shop.e2e.json" }, window = new { last = "3600s" } });
        var summary = (await answered.ReadJsonAsync())["groups"]![0]!["summary"]!;
        Assert.Equal(values.Mean(), summary["mean"].Number(), 1e-9); // MathNet.Numerics
        Assert.Equal(values.StandardDeviation(), summary["stddev"].Number(), 1e-9); // MathNet.Numerics (sample standard deviation)

        using GrpcChannel channel = GrpcChannel.ForAddress(process.Server.Address);
        var reply = await new Query.QueryClient(channel).SummarizeAsync(Requests.Summarize("shop.e2e.json"));
        Assert.Equal(80ul, Assert.Single(reply.Groups).Summary.Count);
    }
    [Fact]
    public async Task Compare_over_json_flags_the_widened_tail_and_not_the_unchanged_median()
    {
        HttpClient http = process.Http;

        // A made-up ferry booking service in two regions: the same bookings, except that in the
        // south the slowest 5% took three times as long. Every rank below 0.95 is the same value on
        // both sides, so the median must not move while the p99 must.
        double[] north = Requests.Latencies(4000, 17);
        double cut = north.Quantile(0.95); // MathNet.Numerics (R8 definition; any point between the 95th-percentile neighbours works)
        double[] south = [.. north.Select(v => v > cut ? v * 3 : v)];
        foreach (var (region, values) in new[] { ("north", north), ("south", south) })
        {
            using var pushed = await http.PostAsync("/v1/push", new { metric = "ferry.booking.latency", labels = new Dictionary<string, string> { ["region"] = region }, values });
            Assert.Equal(HttpStatusCode.OK, pushed.StatusCode);
        }

        object Side(string region) => new { selector = new { metric = "ferry.booking.latency", labelEquals = new Dictionary<string, string> { ["region"] = region } }, window = new { last = "3600s" } };
        using var compared = await http.PostAsync("/v1/compare", new { a = Side("north"), b = Side("south"), quantiles = new[] { 0.5, 0.99 } });
        Assert.Equal(HttpStatusCode.OK, compared.StatusCode);
        JsonNode reply = await compared.ReadJsonAsync();
        JsonNode median = reply["shifts"]![0]!;
        JsonNode p99 = reply["shifts"]![1]!;
        Assert.False(median["significant"]?.GetValue<bool>() ?? false, $"the unchanged median was flagged: {median.ToJsonString()}");
        Assert.True(p99["significant"]?.GetValue<bool>() ?? false, $"the tripled tail was not flagged: {p99.ToJsonString()}");
        Assert.True(p99["delta"].Number() > 0, "the south's p99 must be the larger");

        // The two empirical distributions differ exactly on the moved 5%: the Kolmogorov–Smirnov
        // distance of the raw values is 0.05 (definition of the two-sample statistic, common practice).
        Assert.InRange(0.05, reply["ksLow"].Number(), reply["ksHigh"].Number());
    }

    [Fact]
    public async Task Watch_over_json_streams_one_summary_per_interval_until_its_limit()
    {
        HttpClient http = process.Http;
        double[] values = Requests.Latencies(300, 23);
        using (var pushed = await http.PostAsync("/v1/push", new { metric = "ferry.checkin.latency", values }))
        {
            Assert.Equal(HttpStatusCode.OK, pushed.StatusCode);
        }

        using var request = new HttpRequestMessage(HttpMethod.Post, "/v1/watch")
        {
            Content = System.Net.Http.Json.JsonContent.Create(new { query = new { selector = new { metric = "ferry.checkin.latency" }, window = new { last = "3600s" } }, interval = "0.2s", maxUpdates = 3 }),
        };
        using HttpResponseMessage response = await http.SendAsync(request, HttpCompletionOption.ResponseHeadersRead);
        Assert.Equal(HttpStatusCode.OK, response.StatusCode);

        // Each pushed summary arrives as its own JSON document on the open response.
        var updates = new List<JsonNode>();
        await using Stream body = await response.Content.ReadAsStreamAsync();
        await foreach (JsonNode? update in JsonSerializer.DeserializeAsyncEnumerable<JsonNode>(body, topLevelValues: true))
        {
            updates.Add(update!);
        }

        Assert.Equal(3, updates.Count);
        foreach (JsonNode update in updates)
        {
            JsonNode summary = update["groups"]![0]!["summary"]!;
            Assert.Equal(values.Length, summary["count"].Number());
            Assert.Equal(values.Mean(), summary["mean"].Number(), 1e-9); // MathNet.Numerics
        }
    }

    /// <summary>The real server process and an HTTP/1.1 client for its JSON endpoint.</summary>
    public sealed class OneProcess : IAsyncLifetime
    {
        private readonly TempDirectory _data = new();

        public ServerProcess Server { get; private set; } = null!;

        public HttpClient Http { get; private set; } = null!;

        public async Task InitializeAsync()
        {
            Server = await ServerProcess.StartAsync(new Dictionary<string, string> { ["Persistence__DataDirectory"] = _data.Path });
            Http = new HttpClient { BaseAddress = Server.HttpAddress, DefaultRequestVersion = HttpVersion.Version11, Timeout = TimeSpan.FromSeconds(20) };
        }

        public async Task DisposeAsync()
        {
            Http.Dispose();
            await Server.DisposeAsync();
            _data.Dispose();
        }
    }
}
