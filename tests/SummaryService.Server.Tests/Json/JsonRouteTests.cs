using System.Net;
using MathNet.Numerics.Statistics;
using SummaryService.Server.Auth;
using SummaryService.Server.Tests.Support;

namespace SummaryService.Server.Tests.Json;

/// <summary>The google.api.http routes: same answers, same access checks and same validation as gRPC, in JSON.</summary>
public sealed class JsonRouteTests
{
    private const string Reader = "json-reader-key";

    [Fact]
    public async Task Json_push_then_summarize_gives_the_figures_of_the_pushed_values()
    {
        await using var server = new TestServer();
        using HttpClient http = server.CreateHttpClient();
        double[] values = Requests.Latencies(150, 91);

        using var pushed = await http.PostAsync("/v1/push", new { metric = "shop.json.latency", labels = new { region = "north" }, values });
        Assert.Equal(HttpStatusCode.OK, pushed.StatusCode);
        Assert.Equal(150, (await pushed.ReadJsonAsync())["accepted"].Number());

        using var answered = await http.PostAsync("/v1/summarize", new { selector = new { metric = "shop.json.latency" }, window = new { last = "3600s" }, quantiles = new[] { 0.5, 0.9 } });
        Assert.Equal(HttpStatusCode.OK, answered.StatusCode);
        var summary = (await answered.ReadJsonAsync())["groups"]![0]!["summary"]!;
        double[] sorted = [.. values.Order()];
        Assert.Equal(150, summary["count"].Number());
        Assert.True(summary["exact"]!.GetValue<bool>()); // 150 values stay below k = 200: nothing compacted
        Assert.Equal(values.Mean(), summary["mean"].Number(), 1e-9); // MathNet.Numerics
        Assert.Equal(values.Variance(), summary["variance"].Number(), 1e-9); // MathNet.Numerics (sample variance)
        Assert.Equal(SortedArrayStatistics.QuantileCustom(sorted, 0.5, QuantileDefinition.R7), summary["quantiles"]![0]!["value"].Number(), 1e-12); // MathNet.Numerics, Hyndman & Fan definition 7
        Assert.Equal(SortedArrayStatistics.QuantileCustom(sorted, 0.9, QuantileDefinition.R7), summary["quantiles"]![1]!["value"].Number(), 1e-12); // MathNet.Numerics, Hyndman & Fan definition 7

        using var catalogue = await http.GetAsync("/v1/catalogue?metric=shop.json.latency");
        var entry = (await catalogue.ReadJsonAsync())["series"]![0]!;
        Assert.Equal("north", entry["labels"]!["region"]!.GetValue<string>());
    }

    [Fact]
    public async Task A_json_call_without_a_key_is_refused_and_writes_nothing()
    {
        await using var server = new TestServer(new Dictionary<string, string?>
        {
            ["Auth:Enabled"] = "true",
            ["Auth:Keys:0:Name"] = "json-reader",
            ["Auth:Keys:0:Sha256"] = ApiKeyRegistry.HashOf(Reader),
            ["Auth:Keys:0:Scopes:0"] = "read",
        });
        using HttpClient http = server.CreateHttpClient();

        using var anonymous = await http.PostAsync("/v1/push", new { metric = "shop.json.auth", values = new[] { 1.0 } });
        Assert.Equal(HttpStatusCode.Unauthorized, anonymous.StatusCode);
        Assert.Equal(16, (await anonymous.ReadJsonAsync())["code"].Number()); // gRPC Unauthenticated

        using var reader = await http.PostAsync("/v1/push", new { metric = "shop.json.auth", values = new[] { 1.0 } }, bearer: Reader);
        Assert.Equal(HttpStatusCode.Forbidden, reader.StatusCode);
        Assert.Contains("write scope", (await reader.ReadJsonAsync())["message"]!.GetValue<string>(), StringComparison.Ordinal);

        using var query = await http.PostAsync("/v1/summarize", new { selector = new { metric = "shop.json.auth" }, window = new { last = "3600s" } }, bearer: Reader);
        Assert.Equal(HttpStatusCode.NotFound, query.StatusCode); // nothing was written
    }

    [Fact]
    public async Task A_bad_quantile_comes_back_as_a_json_status_naming_the_field()
    {
        await using var server = new TestServer();
        using HttpClient http = server.CreateHttpClient();
        using var pushed = await http.PostAsync("/v1/push", new { metric = "shop.json.valid", values = new[] { 1.0, 2.0 } });
        Assert.Equal(HttpStatusCode.OK, pushed.StatusCode);

        using var refused = await http.PostAsync("/v1/summarize", new { selector = new { metric = "shop.json.valid" }, window = new { last = "3600s" }, quantiles = new[] { 0.5, 1.5 } });
        Assert.Equal(HttpStatusCode.BadRequest, refused.StatusCode);
        var status = await refused.ReadJsonAsync();
        Assert.Equal(3, status["code"].Number()); // gRPC InvalidArgument
        Assert.Contains("quantiles[1] is 1.5", status["message"]!.GetValue<string>(), StringComparison.Ordinal);
    }
}
