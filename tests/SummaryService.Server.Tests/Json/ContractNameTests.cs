using System.Net;
using Google.Protobuf;
using Google.Protobuf.WellKnownTypes;
using Grpc.Core;
using SummaryService.Contract.V1;
using SummaryService.Server.Tests.Support;

namespace SummaryService.Server.Tests.Json;

/// <summary>
/// The contract's names answer end to end, over gRPC and over their JSON routes; the names they
/// replaced are gone rather than kept as aliases, so no caller keeps using them by accident.
/// </summary>
public sealed class ContractNameTests
{
    [Fact]
    public async Task Timeline_catalogue_and_upkeep_answer_on_their_json_routes()
    {
        await using var server = new TestServer();
        using HttpClient http = server.CreateHttpClient();
        using (var pushed = await http.PostAsync("/v1/push", new { metric = "harbour.crane.cycle_s", labels = new { quay = "east" }, values = new[] { 41.0, 44.0, 47.0 } }))
        {
            Assert.Equal(HttpStatusCode.OK, pushed.StatusCode);
        }

        using var timeline = await http.PostAsync("/v1/timeline", new { selector = new { metric = "harbour.crane.cycle_s", labelEquals = new { quay = "east" } }, window = new { last = "600s" }, step = "300s" });
        Assert.Equal(HttpStatusCode.OK, timeline.StatusCode);
        var steps = (await timeline.ReadJsonAsync())["steps"]!.AsArray();
        Assert.Equal(2, steps.Count);
        Assert.Equal(3, steps.Sum(s => s!["groups"]!.AsArray().Sum(g => g!["summary"]!["count"].Number())));

        using var catalogue = await http.GetAsync("/v1/catalogue?metric=harbour.crane.cycle_s");
        Assert.Equal(HttpStatusCode.OK, catalogue.StatusCode);
        Assert.Equal("east", (await catalogue.ReadJsonAsync())["series"]![0]!["labels"]!["quay"]!.GetValue<string>());

        using var holdings = await http.GetAsync("/v1/upkeep/holdings");
        Assert.Equal(HttpStatusCode.OK, holdings.StatusCode);
        Assert.Equal(1, (await holdings.ReadJsonAsync())["series"].Number());

        using var snapshot = await http.PostAsync("/v1/upkeep/write-snapshot", new { });
        Assert.Equal(HttpStatusCode.OK, snapshot.StatusCode);
        Assert.True((await snapshot.ReadJsonAsync())["generation"].Number() >= 1);

        using var removed = await http.PostAsync("/v1/upkeep/remove-series", new { metric = "harbour.crane.cycle_s", labels = new { quay = "east" } });
        Assert.Equal(HttpStatusCode.OK, removed.StatusCode);
        Assert.Equal(3, (await removed.ReadJsonAsync())["count"].Number());
        Assert.Empty((await server.Query.CatalogueAsync(new CatalogueRequest())).Series);
    }

    [Theory]
    [InlineData("POST", "/v1/series")]
    [InlineData("GET", "/v1/admin/series")]
    [InlineData("POST", "/v1/admin/series/delete")]
    [InlineData("POST", "/v1/admin/snapshot")]
    [InlineData("GET", "/v1/admin/stats")]
    public async Task The_routes_the_contract_replaced_are_not_found(string method, string path)
    {
        await using var server = new TestServer();
        using HttpClient http = server.CreateHttpClient();
        using var request = new HttpRequestMessage(new HttpMethod(method), path) { Content = method == "POST" ? new StringContent("{}", System.Text.Encoding.UTF8, "application/json") : null };
        using var response = await http.SendAsync(request);
        Assert.Equal(HttpStatusCode.NotFound, response.StatusCode);
    }

    [Theory]
    [InlineData("/summary.v1.Query/Series")]
    [InlineData("/summary.v1.Admin/ListSeries")]
    [InlineData("/summary.v1.Admin/DeleteSeries")]
    [InlineData("/summary.v1.Admin/TakeSnapshot")]
    [InlineData("/summary.v1.Admin/GetStats")]
    public async Task The_methods_the_contract_replaced_are_unimplemented(string fullName)
    {
        await using var server = new TestServer();
        string[] parts = fullName.Split('/', StringSplitOptions.RemoveEmptyEntries);
        var marshaller = Marshallers.Create(m => m.ToByteArray(), Empty.Parser.ParseFrom);
        var method = new Method<Empty, Empty>(MethodType.Unary, parts[0], parts[1], marshaller, marshaller);
        var ex = await Assert.ThrowsAsync<RpcException>(async () => await server.Channel.CreateCallInvoker().AsyncUnaryCall(method, null, default, new Empty()));
        Assert.Equal(StatusCode.Unimplemented, ex.StatusCode);
    }

    [Fact]
    public async Task A_selector_names_its_labels_label_equals_over_json()
    {
        await using var server = new TestServer();
        using HttpClient http = server.CreateHttpClient();
        using (var pushed = await http.PostAsync("/v1/push", new { metric = "harbour.gate.wait_s", labels = new { gate = "north" }, values = new[] { 3.0 } }))
        {
            Assert.Equal(HttpStatusCode.OK, pushed.StatusCode);
        }

        using var matched = await http.PostAsync("/v1/summarize", new { selector = new { metric = "harbour.gate.wait_s", labelEquals = new { gate = "south" } }, window = new { last = "600s" } });
        Assert.Equal(HttpStatusCode.NotFound, matched.StatusCode);
        Assert.Equal("no series matches harbour.gate.wait_s · gate=south.", (await matched.ReadJsonAsync())["message"]!.GetValue<string>());
    }
}
