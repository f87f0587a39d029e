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
        await RunCyclesAsync(data.Path, "crash", new Dictionary<string, string>(), killAfterMs: (200, 1500));
    }

    /// <summary>
    /// The same with aged buckets leaving memory as soon as they close: one-second buckets roll
    /// through short tiers, so within a few seconds kills land while segments are written, while
    /// rollup reads them back and writes coarser ones, while files are retired and manifests written.
    /// </summary>
    [Fact]
    public async Task Every_acknowledged_batch_survives_sigkill_during_segment_writes_rollup_and_retirement_exactly_once()
    {
        using var data = new TempDirectory();
        var segments = new Dictionary<string, string>
        {
            ["Store__Tiers__0__BucketWidth"] = "1s",
            ["Store__Tiers__0__Retention"] = "6s",
            ["Store__Tiers__1__BucketWidth"] = "5s",
            ["Store__Tiers__1__Retention"] = "20s",
            ["Store__Tiers__2__BucketWidth"] = "30s",
            ["Store__Tiers__2__Retention"] = "1h",
            ["Persistence__SegmentFiles"] = "true",
            ["Persistence__HotSpan"] = "0s",
            ["Persistence__SegmentSpan"] = "1s",
            ["Persistence__BucketsPerSpan"] = "1",
            ["Persistence__RollupInterval"] = "200ms",
        };
        var seen = new HashSet<string>(StringComparer.Ordinal);
        await RunCyclesAsync(data.Path, "segcrash", segments, killAfterMs: (300, 2000), afterKill: () => seen.UnionWith(SegmentFiles(data.Path)));

        // Not vacuous: kills met segments of the first three tiers (written, then rolled into the next), and files were retired.
        string[] left = SegmentFiles(data.Path);
        output.WriteLine($"{seen.Count} segment files seen across the kills, {left.Length} left");
        Assert.All(new[] { "-t0-", "-t1-", "-t2-" }, tier => Assert.Contains(seen, f => f.Contains(tier, StringComparison.Ordinal)));
        Assert.Contains(seen, f => !left.Contains(f));
    }

    private static string[] SegmentFiles(string dataDirectory)
    {
        string directory = Path.Combine(dataDirectory, "segments");
        return Directory.Exists(directory) ? [.. Directory.GetFiles(directory, "*.seg").Select(Path.GetFileName)!] : [];
    }

    private async Task RunCyclesAsync(string dataDirectory, string name, Dictionary<string, string> settings, (int From, int To) killAfterMs, Action? afterKill = null)
    {
        var environment = new Dictionary<string, string>(settings)
        {
            ["Persistence__DataDirectory"] = dataDirectory,
            ["Persistence__Durability"] = "Wal",

            // A snapshot every second, so kills land during snapshots as well as between them.
            ["Persistence__SnapshotInterval"] = "00:00:01",
            ["Logging__LogLevel__Default"] = "Warning",
        };
        var producers = Enumerable.Range(0, Producers).Select(i => new SequencedProducer($"{name}-producer-{i}", $"{name}.p{i}")).ToArray();
        var random = new Random(1902);
        var watch = System.Diagnostics.Stopwatch.StartNew();

        for (int cycle = 0; cycle < Cycles; cycle++)
        {
            await using ServerProcess server = await ServerProcess.StartAsync(environment);
            using GrpcChannel channel = GrpcChannel.ForAddress(server.Address);
            await AssertPrefixesAsync(channel, producers, $"after restart {cycle}");

            using var stop = new CancellationTokenSource();
            Task[] running = producers.Select(p => Task.Run(() => p.RunAsync(channel, stop.Token))).ToArray();
            await Task.Delay(random.Next(killAfterMs.From, killAfterMs.To));
            server.Kill();
            afterKill?.Invoke();
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
