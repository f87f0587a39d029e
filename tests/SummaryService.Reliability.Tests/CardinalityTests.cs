using System.Globalization;
using Grpc.Core;
using SummaryService.Contract.V1;
using SummaryService.Reliability.Tests.Support;
using SummaryService.Server.Auth;
using Xunit.Abstractions;

namespace SummaryService.Reliability.Tests;

/// <summary>One tenant creating series without end: refused past its limit, memory within budget, the other tenants untouched.</summary>
public sealed class CardinalityTests(ITestOutputHelper output)
{
    private const int TenantLimit = 5000;
    private const string FloodKey = "flood-writer-key";
    private const string CalmKey = "calm-writer-key";

    /// <summary>Distinct series the flooding tenant tries to create; <c>SUMMARY_CARDINALITY_SERIES</c> changes it.</summary>
    private static int Attempts => int.Parse(Environment.GetEnvironmentVariable("SUMMARY_CARDINALITY_SERIES") ?? "1000000", CultureInfo.InvariantCulture);

    [Fact]
    public async Task A_tenant_creating_a_million_series_is_refused_past_its_limit_while_another_tenant_is_unaffected()
    {
        // Tenants follow the keys' prefixes: "flood." and "calm.", not the part of the name before the first dot.
        await using var server = LoopbackServer.Start(new Dictionary<string, string?>
        {
            ["Store:MaxSeriesPerTenant"] = TenantLimit.ToString(CultureInfo.InvariantCulture),
            ["Store:MemoryBudgetBytes"] = (512L << 20).ToString(CultureInfo.InvariantCulture),
            ["Auth:Enabled"] = "true",
            ["Auth:Keys:0:Name"] = "flood",
            ["Auth:Keys:0:Sha256"] = ApiKeyRegistry.HashOf(FloodKey),
            ["Auth:Keys:0:Scopes:0"] = "write",
            ["Auth:Keys:0:Prefixes:0"] = "flood.",
            ["Auth:Keys:1:Name"] = "calm",
            ["Auth:Keys:1:Sha256"] = ApiKeyRegistry.HashOf(CalmKey),
            ["Auth:Keys:1:Scopes:0"] = "write",
            ["Auth:Keys:1:Scopes:1"] = "read",
            ["Auth:Keys:1:Prefixes:0"] = "calm.",
        });
        var ingest = new Ingest.IngestClient(server.Channel);
        long before = GC.GetTotalMemory(forceFullCollection: true);

        Task<(long Accepted, long Refused)> flood = FloodAsync(ingest);
        long calmValues = 0;
        while (!flood.IsCompleted)
        {
            var reply = await ingest.PushAsync(new Batch { Metric = "calm.latency", Labels = { ["route"] = $"/r{calmValues % 7}" }, Values = { 1, 2, 3 } }, Bearer(CalmKey));
            Assert.Equal(3ul, reply.Accepted);
            calmValues += 3;
        }

        var (accepted, refused) = await flood;
        long after = GC.GetTotalMemory(forceFullCollection: true);
        output.WriteLine($"{Attempts} new series tried: {accepted} accepted, {refused} refused; the calm tenant pushed {calmValues} values meanwhile; managed memory {before >> 20} → {after >> 20} MB");
        Assert.Equal(TenantLimit, accepted);
        Assert.Equal(Attempts - TenantLimit, refused);
        Assert.True(after - before < 512L << 20, $"{(after - before) >> 20} MB for {TenantLimit} series");

        var summary = await new Query.QueryClient(server.Channel).SummarizeAsync(new SummarizeRequest { Selector = new Selector { Metric = "calm.latency" }, Window = new Window { Last = Google.Protobuf.WellKnownTypes.Duration.FromTimeSpan(TimeSpan.FromHours(1)) } }, Bearer(CalmKey));
        Assert.Equal((ulong)calmValues, summary.Groups[0].Summary.Count);

        // Within its own limit the other tenant may still create series.
        var fresh = await ingest.PushAsync(new Batch { Metric = "calm.latency", Labels = { ["route"] = "/new" }, Values = { 4 } }, Bearer(CalmKey));
        Assert.Equal(1ul, fresh.Accepted);
    }

    // Four streams, each trying a quarter of the new series, one value each.
    private async Task<(long Accepted, long Refused)> FloodAsync(Ingest.IngestClient ingest)
    {
        var results = await Task.WhenAll(Enumerable.Range(0, 4).Select(part => Task.Run(async () =>
        {
            using var call = ingest.PushStream(Bearer(FloodKey));
            Task<(long, long)> reading = Task.Run(async () =>
            {
                long ok = 0, limit = 0;
                while (await call.ResponseStream.MoveNext(CancellationToken.None))
                {
                    PushReply reply = call.ResponseStream.Current;
                    if (reply.ErrorCode.Length == 0)
                    {
                        ok++;
                    }
                    else
                    {
                        Assert.Equal(nameof(StatusCode.ResourceExhausted), reply.ErrorCode);
                        Assert.Contains("tenant 'flood.' holds 5000 series, its limit", reply.Error, StringComparison.Ordinal);
                        limit++;
                    }
                }

                return (ok, limit);
            });
            for (int i = part; i < Attempts; i += 4)
            {
                await call.RequestStream.WriteAsync(new Batch { Metric = "flood.requests", Labels = { ["id"] = i.ToString(CultureInfo.InvariantCulture) }, Values = { 1 } });
            }

            await call.RequestStream.CompleteAsync();
            return await reading;
        })));
        return (results.Sum(r => r.Item1), results.Sum(r => r.Item2));
    }

    private static Metadata Bearer(string key) => new() { { "authorization", $"Bearer {key}" } };
}
