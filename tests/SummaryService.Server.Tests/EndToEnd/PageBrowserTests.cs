using System.Diagnostics;
using System.Net;
using SummaryService.Server.Auth;
using SummaryService.Server.Tests.Json;
using SummaryService.Server.Tests.Support;
using SummaryService.TestSupport;

namespace SummaryService.Server.Tests.EndToEnd;

/// <summary>The built-in page in a real headless browser against the real process on loopback.</summary>
[Collection(nameof(EndToEndTests))]
public sealed class PageBrowserTests
{
    // A made-up parcel depot timing its barcode scans, in milliseconds, slower each quarter hour.
    private const string Metric = "depot.scanner.latency";
    private const string WriterKey = "depot-scanners-writer";
    private const string ReaderKey = "depot-dashboard-reader";

    [Fact]
    public Task The_page_draws_percentile_bands_and_a_histogram_that_match_the_server() =>
        DrawAndCheckAsync(new Dictionary<string, string>(), writerKey: null, readerKey: null);

    [Fact]
    public Task With_authentication_on_the_page_asks_for_a_key_and_draws_with_a_read_key() =>
        DrawAndCheckAsync(
            new Dictionary<string, string>
            {
                ["Auth__Enabled"] = "true",
                ["Auth__Keys__0__Name"] = "scanners",
                ["Auth__Keys__0__Sha256"] = ApiKeyRegistry.HashOf(WriterKey),
                ["Auth__Keys__0__Scopes__0"] = "write",
                ["Auth__Keys__1__Name"] = "dashboard",
                ["Auth__Keys__1__Sha256"] = ApiKeyRegistry.HashOf(ReaderKey),
                ["Auth__Keys__1__Scopes__0"] = "read",
                ["Auth__Keys__1__Prefixes__0"] = "depot.",
            },
            WriterKey,
            ReaderKey);

    private static async Task DrawAndCheckAsync(Dictionary<string, string> environment, string? writerKey, string? readerKey)
    {
        using var data = new TempDirectory();
        environment["Persistence__DataDirectory"] = data.Path;
        await using var server = await ServerProcess.StartAsync(environment);
        using var http = new HttpClient { BaseAddress = server.HttpAddress, Timeout = TimeSpan.FromSeconds(20) };

        // One batch in the middle of each 15-minute step of the last hour, far from the step edges,
        // so each lands in exactly one step whenever within the next minutes the page asks.
        long now = DateTimeOffset.UtcNow.ToUnixTimeMilliseconds();
        long[] offsetsSeconds = [3150, 2250, 1350, 450];
        for (int i = 0; i < offsetsSeconds.Length; i++)
        {
            // 2000 values per batch: enough for the sketch to compact, so the bands have width.
            double[] values = Requests.Latencies(2000, 200 + i, mu: 3.0 + (0.15 * i));
            using var pushed = await http.PostAsync("/v1/push", new { metric = Metric, values, timeUnixMs = now - (offsetsSeconds[i] * 1000) }, writerKey);
            Assert.Equal(HttpStatusCode.OK, pushed.StatusCode);
        }

        string screenshot = Path.Combine(AppContext.BaseDirectory, readerKey is null ? "page-screenshot.png" : "page-screenshot-auth.png");
        var script = new Dictionary<string, string>
        {
            ["PAGE_URL"] = server.HttpAddress.ToString(),
            ["METRIC"] = Metric,
            ["EXPECT_POINTS"] = "4",
            ["EXPECT_BARS"] = "16", // the default bins of the shape view (shapeView.settings in Page/shape.js)
            ["SCREENSHOT"] = screenshot,
        };
        if (readerKey is not null)
        {
            script["API_KEY"] = readerKey;
        }

        var clock = Stopwatch.StartNew();
        var (exitCode, output) = await NodeScript.RunAsync("page-test.mjs", script, TimeSpan.FromSeconds(120));
        Assert.True(exitCode == 0, $"page test failed after {clock.Elapsed.TotalSeconds:F1} s:\n{output}");
        Assert.True(new FileInfo(screenshot).Length > 10_000, "the screenshot is empty");
    }
}
