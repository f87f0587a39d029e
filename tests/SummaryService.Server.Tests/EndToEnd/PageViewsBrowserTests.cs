using System.Diagnostics;
using System.Globalization;
using System.Net;
using SummaryService.Server.Tests.Json;
using SummaryService.Server.Tests.Support;
using SummaryService.TestSupport;

namespace SummaryService.Server.Tests.EndToEnd;

/// <summary>
/// Every view of the built-in page in a real headless browser against the real process on loopback:
/// label filters, group-by panels, log axes, hover figures, shape, compare, live refresh, shared
/// addresses, error states and the dark scheme, each checked against the server's own JSON answers
/// (tests/SummaryService.Page.Tests/views-test.mjs).
/// </summary>
[Collection(nameof(EndToEndTests))]
public sealed class PageViewsBrowserTests
{
    // A made-up parcel depot timing its sorting machines per region and lane, in milliseconds.
    // Half an hour ago the south region's sorters got slower (log-normal location +0.5).
    private const string Metric = "depot.sorter.latency_ms";
    private static readonly string[] Regions = ["north", "south", "west"];
    private static readonly string[] Lanes = ["a", "b"];

    [Fact]
    public async Task Every_view_of_the_page_shows_what_the_server_answers_for_the_same_selection()
    {
        using var data = new TempDirectory();
        await using var server = await ServerProcess.StartAsync(new Dictionary<string, string> { ["Persistence__DataDirectory"] = data.Path });
        using var http = new HttpClient { BaseAddress = server.HttpAddress, Timeout = TimeSpan.FromSeconds(20) };

        long now = DateTimeOffset.UtcNow.ToUnixTimeMilliseconds();
        long slowerFrom = now - (30 * 60_000);
        int seed = 1;
        for (int region = 0; region < Regions.Length; region++)
        {
            for (int lane = 0; lane < Lanes.Length; lane++)
            {
                // One batch in the middle of each 5-minute step of the last hour, so each lands in one
                // step of the page's timeline whenever within the next two minutes the page asks.
                for (int step = 0; step < 12; step++)
                {
                    long time = now - (((step * 300) + 150) * 1000L);
                    double mu = 3.0 + (0.1 * lane) + (Regions[region] == "south" && time >= slowerFrom ? 0.5 : 0.0);
                    var batch = new { metric = Metric, labels = new Dictionary<string, string> { ["region"] = Regions[region], ["lane"] = Lanes[lane] }, values = Requests.Latencies(250, seed++, mu), timeUnixMs = time };
                    using var pushed = await http.PostAsync("/v1/push", batch);
                    Assert.Equal(HttpStatusCode.OK, pushed.StatusCode);
                }
            }
        }

        string shots = AppContext.BaseDirectory;
        var script = new Dictionary<string, string>
        {
            ["PAGE_URL"] = server.HttpAddress.ToString(),
            ["METRIC"] = Metric,
            ["FROM"] = Iso(now - 3_600_000),
            ["TO"] = Iso(now),
            ["AT"] = Iso(slowerFrom),
            ["SCREENSHOT_DIR"] = shots,
        };

        var clock = Stopwatch.StartNew();
        var (exitCode, output) = await NodeScript.RunAsync("views-test.mjs", script, TimeSpan.FromSeconds(180));
        Assert.True(exitCode == 0, $"views test failed after {clock.Elapsed.TotalSeconds:F1} s:\n{output}");
        foreach (string shot in new[] { "page-bands-by-region.png", "page-shape.png", "page-compare.png", "page-compare-dark.png" })
        {
            Assert.True(new FileInfo(Path.Combine(shots, shot)).Length > 10_000, $"the screenshot {shot} is empty");
        }
    }

    private static string Iso(long unixMs) =>
        DateTimeOffset.FromUnixTimeMilliseconds(unixMs).UtcDateTime.ToString("yyyy-MM-dd'T'HH:mm:ss'Z'", CultureInfo.InvariantCulture);
}
