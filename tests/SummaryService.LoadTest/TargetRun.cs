using System.Diagnostics;
using Grpc.Net.Client;
using SummaryService.Contract.V1;
using SummaryService.LoadTest.Accuracy;
using SummaryService.LoadTest.Driving;
using SummaryService.LoadTest.Processes;
using SummaryService.LoadTest.Report;
using SummaryService.LoadTest.Workload;
using SummaryService.TestSupport;

namespace SummaryService.LoadTest;

/// <summary>
/// One target through the same three phases: back-fill (producers only), live (producers at "now"
/// while query clients read), check (all-series window query repeated, rank errors, store figures).
/// </summary>
public sealed class TargetRun(LoadOptions options, LoadPlan plan, TimeProvider time)
{
    private static readonly double[] CheckedQuantiles = [0.01, 0.1, 0.25, 0.5, 0.75, 0.9, 0.99, 0.999];

    /// <summary>Starts the target, measures it, stops it.</summary>
    public async Task<TargetFigures> RunAsync(bool baseline, CancellationToken cancellationToken)
    {
        string name = baseline ? "exact baseline" : "sketch server";
        string dataDirectory = Path.Combine(Path.GetTempPath(), "summaryservice-load", Guid.NewGuid().ToString("N"));
        Directory.CreateDirectory(dataDirectory);
        try
        {
            await using ServerGroup server = baseline
                ? new ServerGroup([await ChildServer.StartBaselineAsync(cancellationToken).ConfigureAwait(false)])
                : await StartNodesAsync(dataDirectory, cancellationToken).ConfigureAwait(false);
            long startRss = server.StatusBytes("VmRSS");
            var channels = Enumerable.Range(0, options.Producers + options.Queriers + 1).Select(i => Channel(server.AddressFor(i))).ToArray();
            try
            {
                Console.Error.WriteLine($"[{name}] pids {string.Join(", ", server.Pids)}, back-fill: {plan.FillValues:N0} values into {plan.Series} series × {plan.Buckets} buckets");
                string? database = baseline ? null : ClusterDatabase();
                PostgresCounters? atStart = database is null ? null : await PostgresCounters.ReadAsync(database, cancellationToken).ConfigureAwait(false);
                IngestPhase fill = await IngestAsync(server, channels, live: false, cancellationToken).ConfigureAwait(false);
                // Both targets hold exactly the back-fill here, so this is where their memory compares.
                long fillRss = server.StatusBytes("VmRSS");
                PostgresCounters? afterFill = database is null ? null : await SettledCountersAsync(database, cancellationToken).ConfigureAwait(false);
                Console.Error.WriteLine($"[{name}] live: {options.Seconds} s, {options.Producers} producers, {options.Queriers} query clients");
                var (live, queries) = await LiveAsync(server, channels, cancellationToken).ConfigureAwait(false);
                PostgresCounters? afterLive = database is null ? null : await SettledCountersAsync(database, cancellationToken).ConfigureAwait(false);
                Console.Error.WriteLine($"[{name}] checks");
                GrpcChannel check = channels[^1];
                var (window, checks) = await CheckAsync(check, cancellationToken).ConfigureAwait(false);
                StoreFigures? store = baseline ? null : await StoreFiguresAsync(check, server, startRss, cancellationToken).ConfigureAwait(false);
                long peak = server.StatusBytes("VmHWM");
                long end = server.StatusBytes("VmRSS");
                double cpu = server.CpuSeconds();
                return new TargetFigures(name, startRss, fillRss, fill, live, queries, window, checks, peak, end, cpu, store)
                {
                    Nodes = server.Servers.Count,
                    Database = atStart is null || afterFill is null || afterLive is null
                        ? null
                        : new DatabaseFigures(PostgresCounters.Between(atStart, afterFill, fill.Values, fill.Seconds), PostgresCounters.Between(afterFill, afterLive, live.Values, live.Seconds)),
                };
            }
            finally
            {
                foreach (GrpcChannel channel in channels)
                {
                    channel.Dispose();
                }
            }
        }
        finally
        {
            try
            {
                Directory.Delete(dataDirectory, recursive: true);
            }
            catch (IOException)
            {
                // Left for the OS to clean from temp.
            }
        }
    }

    /// <summary>
    /// The real server, or with <c>--nodes N</c> N of them started together as one cluster (their
    /// settings from <c>--server-env</c>; each gets its own ports between nodes).
    /// </summary>
    private async Task<ServerGroup> StartNodesAsync(string dataDirectory, CancellationToken cancellationToken)
    {
        var starting = Enumerable.Range(0, options.Nodes).Select(node =>
        {
            var environment = new Dictionary<string, string>(options.ServerEnvironment, StringComparer.Ordinal);
            if (options.Nodes > 1)
            {
                environment["Cluster__SiloPort"] = ServerProcess.FreePort().ToString(System.Globalization.CultureInfo.InvariantCulture);
                environment["Cluster__GatewayPort"] = ServerProcess.FreePort().ToString(System.Globalization.CultureInfo.InvariantCulture);
            }

            return ChildServer.StartSketchServerAsync(options.ServerDll, Path.Combine(dataDirectory, $"node{node}"), options.Durability, environment, cancellationToken);
        });
        return new ServerGroup(await Task.WhenAll(starting).ConfigureAwait(false));
    }

    /// <summary>The cluster's database when the server runs in Orleans mode, whose figures the report then adds.</summary>
    private string? ClusterDatabase() =>
        options.ServerEnvironment.TryGetValue("Cluster__Mode", out string? mode) && mode == "Orleans" && options.ServerEnvironment.TryGetValue("Cluster__Postgres", out string? database)
            ? database
            : null;

    private static async Task<PostgresCounters> SettledCountersAsync(string database, CancellationToken cancellationToken)
    {
        await Task.Delay(PostgresCounters.Settle, cancellationToken).ConfigureAwait(false);
        return await PostgresCounters.ReadAsync(database, cancellationToken).ConfigureAwait(false);
    }

    private async Task<IngestPhase> IngestAsync(ServerGroup server, GrpcChannel[] channels, bool live, CancellationToken cancellationToken, long deadline = 0)
    {
        var meter = new CpuMeter(server.Pids);
        var producers = new PushProducer[options.Producers];
        var runs = new Task[options.Producers];
        long started = Stopwatch.GetTimestamp();
        for (int p = 0; p < producers.Length; p++)
        {
            producers[p] = new PushProducer(channels[p], options.Inflight);
            runs[p] = producers[p].RunAsync(BatchesOf(p, live, deadline), cancellationToken);
        }

        await Task.WhenAll(runs).ConfigureAwait(false);
        double seconds = Stopwatch.GetElapsedTime(started).TotalSeconds;
        long accepted = producers.Sum(p => p.Accepted);
        return new IngestPhase(
            accepted,
            seconds,
            LatencySamples.Combine(producers.Select(p => p.Acks)).Summarize(),
            producers.Sum(p => p.Errors),
            producers.Select(p => p.FirstError).FirstOrDefault(e => e is not null),
            meter.Share())
        {
            Duplicates = producers.Sum(p => p.Duplicates),
        };
    }

    private async Task<(IngestPhase Live, LiveQueries Queries)> LiveAsync(ServerGroup server, GrpcChannel[] channels, CancellationToken cancellationToken)
    {
        long deadline = Stopwatch.GetTimestamp() + (long)(options.Seconds * (double)Stopwatch.Frequency);
        using var querying = CancellationTokenSource.CreateLinkedTokenSource(cancellationToken);
        var clients = new QueryClient[options.Queriers];
        var reads = new Task[clients.Length];
        for (int q = 0; q < clients.Length; q++)
        {
            clients[q] = new QueryClient(channels[options.Producers + q], plan.Series, options.Seed + 1000 + (ulong)q, TimeSpan.FromMilliseconds(options.QueryPauseMs), time);
            reads[q] = clients[q].RunAsync(querying.Token);
        }

        IngestPhase live = await IngestAsync(server, channels, live: true, cancellationToken, deadline).ConfigureAwait(false);
        await querying.CancelAsync().ConfigureAwait(false);
        await Task.WhenAll(reads).ConfigureAwait(false);
        var queries = new LiveQueries(
            LatencySamples.Combine(clients.Select(c => c.Summarize)).Summarize(),
            LatencySamples.Combine(clients.Select(c => c.Timeline)).Summarize(),
            clients.Sum(c => c.Errors),
            clients.Select(c => c.FirstError).FirstOrDefault(e => e is not null));
        return (live, queries);
    }

    // Producer p writes the series s ≡ p (mod producers), one batch of each in turn, so every series
    // fills in time order and the shards see interleaved writers.
    private Func<long, Batch?> BatchesOf(int producer, bool live, long deadline)
    {
        int[] mine = Enumerable.Range(0, plan.Series).Where(s => s % options.Producers == producer).ToArray();
        var scratch = new double[plan.BatchSize];
        string name = $"load-{producer}";
        ulong firstSequence = live ? (ulong)(plan.FillBatchesPerSeries * mine.Length) + 1 : 1;
        return i =>
        {
            if (mine.Length == 0)
            {
                return null;
            }

            long batch = i / mine.Length;
            int series = mine[i % mine.Length];
            if (live)
            {
                return Stopwatch.GetTimestamp() >= deadline ? null : plan.LiveBatch(series, batch, name, firstSequence + (ulong)i, scratch);
            }

            return batch >= plan.FillBatchesPerSeries ? null : plan.FillBatch(series, batch, name, firstSequence + (ulong)i, scratch);
        };
    }

    private async Task<(WindowQuery Window, List<NamedCheck> Checks)> CheckAsync(GrpcChannel channel, CancellationToken cancellationToken)
    {
        var client = new Query.QueryClient(channel);
        long endBucket = plan.Buckets;
        long firstBucket = Math.Max(0, endBucket - 360);
        long from = plan.SpanStartUnixMs + (firstBucket * LoadPlan.BucketMs);
        long to = plan.SpanEndUnixMs;
        var checks = new List<NamedCheck>();
        var repeats = new LatencySamples();
        double firstMs = 0;
        SummarizeReply? all = null;
        for (int r = 0; r < options.WindowRepeats; r++)
        {
            long started = Stopwatch.GetTimestamp();
            all = await client.SummarizeAsync(Requests.Summarize(null, from, to, CheckedQuantiles), cancellationToken: cancellationToken).ConfigureAwait(false);
            double ms = Stopwatch.GetElapsedTime(started).TotalMilliseconds;
            firstMs = r == 0 ? ms : firstMs;
            repeats.Add(ms);
        }

        long count = 0;
        if (all is { Groups.Count: > 0 })
        {
            Summary summary = all.Groups[0].Summary;
            count = (long)summary.Count;
            checks.Add(new NamedCheck($"all {plan.Series} series, last back-filled hour", RankCheck.Check(plan, Enumerable.Range(0, plan.Series).ToArray(), firstBucket, endBucket, summary)));
        }

        for (int c = 0; c < Math.Min(options.CheckSeries, plan.Series); c++)
        {
            int series = (int)((long)c * plan.Series / Math.Max(1, options.CheckSeries));
            var reply = await client.SummarizeAsync(Requests.Summarize(LoadPlan.SeriesName(series), from, to, CheckedQuantiles), cancellationToken: cancellationToken).ConfigureAwait(false);
            if (reply.Groups.Count > 0)
            {
                checks.Add(new NamedCheck($"series {LoadPlan.SeriesName(series)}, last back-filled hour", RankCheck.Check(plan, [series], firstBucket, endBucket, reply.Groups[0].Summary)));
            }
        }

        return (new WindowQuery(count, firstMs, repeats.Summarize()), checks);
    }

    private static async Task<StoreFigures> StoreFiguresAsync(GrpcChannel channel, ServerGroup server, long startRss, CancellationToken cancellationToken)
    {
        var stats = await new Admin.AdminClient(channel).HoldingsAsync(new HoldingsRequest(), cancellationToken: cancellationToken).ConfigureAwait(false);
        long rss = server.StatusBytes("VmRSS");
        double perBucket = stats.Buckets == 0 ? 0 : (double)stats.EstimatedBytes / stats.Buckets;
        double rssPerBucket = stats.Buckets == 0 ? 0 : (double)(rss - startRss) / stats.Buckets;
        double perSeries = stats.Series == 0 ? 0 : (double)stats.EstimatedBytes / stats.Series;
        return new StoreFigures(stats.Series, (long)stats.Buckets, (long)stats.EstimatedBytes, perSeries, perBucket, rssPerBucket);
    }

    private static GrpcChannel Channel(Uri address) => GrpcChannel.ForAddress(address, new GrpcChannelOptions
    {
        MaxReceiveMessageSize = 64 << 20,
        MaxSendMessageSize = 16 << 20,
        HttpHandler = new SocketsHttpHandler { EnableMultipleHttp2Connections = true },
    });
}
