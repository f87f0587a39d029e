using System.Diagnostics;
using System.Net;
using MathNet.Numerics.Statistics;
using SummaryService.Server.Tests.Json;
using SummaryService.Server.Tests.Support;
using SummaryService.TestSupport;

namespace SummaryService.Server.Tests.EndToEnd;

/// <summary>The "which group stands out" view of the built-in page in a real headless browser against the real process.</summary>
[Collection(nameof(EndToEndTests))]
public sealed class StandoutPageTests
{
    // Otterbyte Parcels' label printers, in milliseconds; printer-06's slowest 5% take twice as long.
    private const string Metric = "otterbyte.printer.latency";

    [Fact]
    public async Task The_view_ranks_the_slow_printer_first_as_the_server_does()
    {
        using var data = new TempDirectory();
        await using var server = await ServerProcess.StartAsync(new Dictionary<string, string> { ["Persistence__DataDirectory"] = data.Path });
        using var http = new HttpClient { BaseAddress = server.HttpAddress, Timeout = TimeSpan.FromSeconds(20) };
        for (int p = 0; p < 10; p++)
        {
            double[] values = Requests.Latencies(3000, 900 + p);
            double cut = values.Quantile(0.95); // MathNet.Numerics
            using var pushed = await http.PostAsync("/v1/push", new { metric = Metric, labels = new Dictionary<string, string> { ["printer"] = $"printer-{p:D2}" }, values = p == 6 ? [.. values.Select(v => v > cut ? v * 2 : v)] : values });
            Assert.Equal(HttpStatusCode.OK, pushed.StatusCode);
        }

        string screenshot = Path.Combine(AppContext.BaseDirectory, "standout-screenshot.png");
        var clock = Stopwatch.StartNew();
        var (exitCode, output) = await NodeScript.RunAsync(
            "standout-test.mjs",
            new Dictionary<string, string> { ["PAGE_URL"] = server.HttpAddress.ToString(), ["METRIC"] = Metric, ["LABEL"] = "printer", ["EXPECT_FIRST"] = "printer-06", ["SCREENSHOT"] = screenshot },
            TimeSpan.FromSeconds(120));
        Assert.True(exitCode == 0, $"standout page test failed after {clock.Elapsed.TotalSeconds:F1} s:\n{output}");
        Assert.True(new FileInfo(screenshot).Length > 5_000, "the screenshot is empty");
    }
}
