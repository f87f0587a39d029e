using Grpc.Core;
using Grpc.Health.V1;
using SummaryService.Contract.V1;
using SummaryService.Reliability.Tests.Fuzzing;
using SummaryService.Reliability.Tests.Support;
using Xunit.Abstractions;

namespace SummaryService.Reliability.Tests;

/// <summary>
/// Random, mutated and noise messages on every RPC and JSON route: every one gets a clear status,
/// the log stays small, the server stays healthy, and the store holds exactly what was acknowledged.
/// </summary>
public sealed class MalformedInputTests(ITestOutputHelper output)
{
    /// <summary>What the server may log for the whole run (start-up lines, refusal summaries): a flood would be megabytes.</summary>
    private const long LogBudgetBytes = 64 << 10;

    /// <summary>Share of the messages sent as JSON over HTTP/1.1; the rest go over gRPC.</summary>
    private const double JsonShare = 0.2;

    [Fact]
    public async Task Fuzzed_messages_get_clear_statuses_a_quiet_log_and_leave_exactly_what_was_acknowledged()
    {
        int messages = FuzzSettings.Messages;
        long now = DateTimeOffset.UtcNow.ToUnixTimeMilliseconds();
        await using var server = LoopbackServer.Start(new Dictionary<string, string?>
        {
            // No rollup during the run: nothing accepted may age out before the final comparison.
            ["Persistence:RollupInterval"] = "01:00:00",
        });
        await SeedAdminMetricsAsync(server);
        var tally = new FuzzTally();
        var ledger = new AcceptedLedger();
        var watch = System.Diagnostics.Stopwatch.StartNew();

        await new GrpcFuzzer(server.GrpcAddress, tally, ledger, now).RunAsync((int)(messages * (1 - JsonShare)), sendersPerRpc: 2, FuzzSettings.Seed, CancellationToken.None);
        using (HttpClient http = server.CreateHttpClient())
        {
            await new JsonFuzzer(http, tally, ledger, now).RunAsync(messages, sendersPerRoute: 2, FuzzSettings.Seed + 1000, CancellationToken.None);
        }

        output.WriteLine($"{watch.Elapsed}: {tally}");
        output.WriteLine($"log: {server.Log.Bytes} bytes in {server.Log.Entries} entries");
        Assert.True(tally.Violations == 0, tally.ToString());
        Assert.True(tally.Messages >= messages, $"only {tally.Messages} of {messages} messages were sent");
        Assert.All(ContractSurface.Methods, method => Assert.True(tally.Count(method.Path) >= 100, $"{method.Path} got only {tally.Count(method.Path)} messages"));

        var health = await new Health.HealthClient(server.Channel).CheckAsync(new HealthCheckRequest());
        Assert.Equal(HealthCheckResponse.Types.ServingStatus.Serving, health.Status);
        await AssertStoreHoldsTheLedgerAsync(server, ledger, now);
        Assert.True(server.Log.Bytes < LogBudgetBytes, $"the server logged {server.Log.Bytes} bytes:\n{server.Log.Text[..Math.Min(8000, server.Log.Text.Length)]}");
    }

    // Series the admin RPCs can find, list and remove: every metric of their pool, with no label and with each single label.
    private static async Task SeedAdminMetricsAsync(LoopbackServer server)
    {
        var ingest = new Ingest.IngestClient(server.Channel);
        foreach (string metric in MessageForge.AdminMetrics)
        {
            await ingest.PushAsync(new Batch { Metric = metric, Values = { 1, 2, 3 } });
            foreach (string name in new[] { "host", "region", "zone", "code" })
            {
                foreach (string value in new[] { "a", "b", "c", "north" })
                {
                    await ingest.PushAsync(new Batch { Metric = metric, Labels = { [name] = value }, Values = { 4 } });
                }
            }
        }
    }

    private async Task AssertStoreHoldsTheLedgerAsync(LoopbackServer server, AcceptedLedger ledger, long now)
    {
        var query = new Query.QueryClient(server.Channel);
        var window = new Window { Range = new Contract.V1.TimeRange { FromUnixMs = now - (long)TimeSpan.FromDays(91).TotalMilliseconds, ToUnixMs = now + (long)TimeSpan.FromHours(1).TotalMilliseconds } };
        long checkedValues = 0;
        foreach (string metric in ledger.ByMetric.Keys.Union(MessageForge.Metrics))
        {
            ledger.ByMetric.TryGetValue(metric, out var expected);
            long count = 0;
            double sum = 0;
            try
            {
                var reply = await query.SummarizeAsync(new SummarizeRequest { Selector = new Contract.V1.Selector { Metric = metric }, Window = window });
                count = (long)reply.Groups[0].Summary.Count;
                sum = reply.Groups[0].Summary.Sum;
            }
            catch (RpcException ex) when (ex.StatusCode == StatusCode.NotFound)
            {
                // No series: only right when nothing was acknowledged for the metric.
            }

            Assert.True((expected?.Count ?? 0) == count, $"{metric}: the store holds {count} values, {expected?.Count ?? 0} were acknowledged");
            if (expected is not null && double.IsFinite(expected.AbsoluteSum))
            {
                // Compensated sums in a different order differ only by rounding relative to Σ|v|.
                Assert.True(Math.Abs(expected.Sum - sum) <= 1e-9 * (1 + expected.AbsoluteSum), $"{metric}: the store's sum is {sum}, the acknowledged values sum to {expected.Sum}");
            }

            checkedValues += count;
        }

        output.WriteLine($"ledger: {ledger.Batches} acknowledged batches and uploads, {checkedValues} values, over {ledger.ByMetric.Count} metrics, all present exactly");
        Assert.True(ledger.Batches > 100, "too few messages were accepted for the comparison to mean anything");
    }
}
