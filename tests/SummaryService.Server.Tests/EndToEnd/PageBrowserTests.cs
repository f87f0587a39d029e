using System.Diagnostics;
using System.Net;
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

    [Fact]
    public async Task The_page_draws_percentile_bands_and_a_histogram_that_match_the_server()
    {
        using var data = new TempDirectory();
        await using var server = await ServerProcess.StartAsync(new Dictionary<string, string> { ["Persistence__DataDirectory"] = data.Path });
        using var http = new HttpClient { BaseAddress = server.HttpAddress, Timeout = TimeSpan.FromSeconds(20) };

        // One batch in the middle of each 15-minute step of the last hour, far from the step edges,
        // so each lands in exactly one step whenever within the next minutes the page asks.
        long now = DateTimeOffset.UtcNow.ToUnixTimeMilliseconds();
        long[] offsetsSeconds = [3150, 2250, 1350, 450];
        for (int i = 0; i < offsetsSeconds.Length; i++)
        {
            // 2000 values per batch: enough for the sketch to compact, so the bands have width.
            double[] values = Requests.Latencies(2000, 200 + i, mu: 3.0 + (0.15 * i));
            using var pushed = await http.PostAsync("/v1/push", new { metric = Metric, values, timeUnixMs = now - (offsetsSeconds[i] * 1000) });
            Assert.Equal(HttpStatusCode.OK, pushed.StatusCode);
        }

        string screenshot = Path.Combine(AppContext.BaseDirectory, "page-screenshot.png");
        var clock = Stopwatch.StartNew();
        var (exitCode, output) = await NodeScript.RunAsync("page-test.mjs", new Dictionary<string, string>
        {
            ["PAGE_URL"] = server.HttpAddress.ToString(),
            ["METRIC"] = Metric,
            ["EXPECT_POINTS"] = "4",
            ["EXPECT_BARS"] = "16", // HISTOGRAM_BINS in Page/page.js
            ["SCREENSHOT"] = screenshot,
        }, TimeSpan.FromSeconds(120));
        Assert.True(exitCode == 0, $"page test failed after {clock.Elapsed.TotalSeconds:F1} s:\n{output}");
        Assert.True(new FileInfo(screenshot).Length > 10_000, "the screenshot is empty");
    }
}
