using System.Globalization;
using Grpc.Core;
using Grpc.Net.Client;
using SummaryService.Contract.V1;
using SummaryService.Reliability.Tests.Support;
using SummaryService.TestSupport;
using Xunit.Abstractions;

namespace SummaryService.Reliability.Tests;

/// <summary>
/// The server process killed with SIGKILL while producers stream batches into it as fast as it
/// answers: after every restart each producer's batches 1..H are present exactly once for some H at
/// least its highest acknowledged sequence, and nothing else is.
/// </summary>
public sealed class ServerCrashTests(ITestOutputHelper output)
{
    private const int Producers = 4;

    /// <summary>Kill cycles in CI; <c>SUMMARY_CRASH_CYCLES</c> runs a longer soak.</summary>
    private static int Cycles => int.Parse(Environment.GetEnvironmentVariable("SUMMARY_CRASH_CYCLES") ?? "20", CultureInfo.InvariantCulture);

    [Fact]
    public async Task Every_acknowledged_batch_survives_repeated_sigkill_of_the_server_exactly_once()
    {
        using var data = new TempDirectory();
        var environment = new Dictionary<string, string>
        {
            ["Persistence__DataDirectory"] = data.Path,
            ["Persistence__Durability"] = "Wal",

            // A snapshot every second, so kills land during snapshots as well as between them.
            ["Persistence__SnapshotInterval"] = "00:00:01",
            ["Logging__LogLevel__Default"] = "Warning",
        };
        var producers = Enumerable.Range(0, Producers).Select(i => new SequencedProducer($"crash-producer-{i}", $"crash.p{i}")).ToArray();
        var random = new Random(1902);
        var watch = System.Diagnostics.Stopwatch.StartNew();

        for (int cycle = 0; cycle < Cycles; cycle++)
        {
            await using ServerProcess server = await ServerProcess.StartAsync(environment);
            using GrpcChannel channel = GrpcChannel.ForAddress(server.Address);
            await AssertPrefixesAsync(channel, producers, $"after restart {cycle}");

            using var stop = new CancellationTokenSource();
            Task[] running = producers.Select(p => Task.Run(() => p.RunAsync(channel, stop.Token))).ToArray();
            await Task.Delay(random.Next(200, 1500));
            server.Kill();
            await stop.CancelAsync();
            await Task.WhenAll(running);
            output.WriteLine($"cycle {cycle}: sent up to {string.Join(", ", producers.Select(p => p.HighestSent))}, acknowledged {producers.Sum(p => p.Acknowledged.Count)} batches in all");
        }

        // The last restart: recovered prefixes, then every unanswered batch once more, then all of them exactly once.
        await using (ServerProcess server = await ServerProcess.StartAsync(environment))
        {
            using GrpcChannel channel = GrpcChannel.ForAddress(server.Address);
            await AssertPrefixesAsync(channel, producers, "after the last restart");
            await Task.WhenAll(producers.Select(p => p.RunAsync(channel, CancellationToken.None, limit: p.HighestSent)));
            foreach (SequencedProducer producer in producers)
            {
                Assert.Equal((int)producer.HighestSent, producer.Acknowledged.Count);
                Assert.Equal(producer.HighestSent, await PresentPrefixAsync(channel, producer, "after resending"));
            }
        }

        output.WriteLine($"{Cycles} SIGKILL cycles, {producers.Sum(p => (long)p.HighestSent)} batches of {SequencedProducer.ValuesPerBatch} values, in {watch.Elapsed}");
    }

    private static async Task AssertPrefixesAsync(GrpcChannel channel, SequencedProducer[] producers, string when)
    {
        foreach (SequencedProducer producer in producers)
        {
            ulong present = await PresentPrefixAsync(channel, producer, when);
            ulong acknowledged = producer.Acknowledged.Count == 0 ? 0 : producer.Acknowledged.Max;
            Assert.True(present >= acknowledged, $"{when}: {producer.Metric} holds batches 1..{present}, but {acknowledged} was acknowledged");
            Assert.True(present <= producer.HighestSent, $"{when}: {producer.Metric} holds batches 1..{present}, more than the {producer.HighestSent} sent");
        }
    }

    /// <summary>The H for which the store holds exactly batches 1..H of the producer (count, sum, sum of squares, extremes); fails when no H fits.</summary>
    private static async Task<ulong> PresentPrefixAsync(GrpcChannel channel, SequencedProducer producer, string when)
    {
        Summary summary;
        try
        {
            var reply = await new Query.QueryClient(channel).SummarizeAsync(new SummarizeRequest
            {
                Selector = new Selector { Metric = producer.Metric },
                Window = new Window { Last = Google.Protobuf.WellKnownTypes.Duration.FromTimeSpan(TimeSpan.FromHours(1)) },
            });
            summary = reply.Groups[0].Summary;
        }
        catch (RpcException ex) when (ex.StatusCode == StatusCode.NotFound)
        {
            return 0;
        }

        long count = (long)summary.Count;
        Assert.True(count % SequencedProducer.ValuesPerBatch == 0, $"{when}: {producer.Metric} holds {count} values, not whole batches");
        ulong h = (ulong)(count / SequencedProducer.ValuesPerBatch);
        var (_, sum, squares) = SequencedProducer.PrefixTotals(h);
        Assert.True(sum == summary.Sum, $"{when}: {producer.Metric} holds {h} batches' worth of values summing to {summary.Sum}, not the {sum} of batches 1..{h}");

        // Σx² from the sample variance and mean: (n − 1)·s² + n·mean².
        double observedSquares = ((count - 1) * summary.Variance) + (count * summary.Mean * summary.Mean);
        Assert.True(Math.Abs(observedSquares - squares) <= 1e-9 * squares, $"{when}: {producer.Metric}: sum of squares {observedSquares}, batches 1..{h} give {squares}");
        Assert.Equal(1, summary.Min);
        Assert.Equal(h, summary.Max);
        return h;
    }
}
