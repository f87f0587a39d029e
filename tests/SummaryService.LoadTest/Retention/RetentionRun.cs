using System.Globalization;
using System.Text.Json;
using Grpc.Net.Client;
using SummaryService.Contract.V1;
using SummaryService.LoadTest.Processes;
using SummaryService.LoadTest.Workload;
using SummaryService.TestSupport;

namespace SummaryService.LoadTest.Retention;

/// <summary>
/// What days of one steady series cost the real server: <c>retention [--days 7] [--per-minute 1000]
/// [--series 1] [--durability none] [--server-env Name=Value] [--json-out path]</c> starts the
/// server on its default settings, pushes every series' values for the whole span with one
/// timestamp per value (ten minutes of values per batch, oldest first, ending now), then reads the
/// store's estimated bytes per tier and the process's resident memory.
/// </summary>
public static class RetentionRun
{
    private const int MinutesPerBatch = 10;

    public static async Task<int> RunAsync(IReadOnlyList<string> args)
    {
        int days = 7;
        int perMinute = 1000;
        int series = 1;
        string durability = "none";
        string? jsonOut = null;
        var environment = new Dictionary<string, string>(StringComparer.Ordinal);
        for (int i = 0; i + 1 < args.Count; i += 2)
        {
            string value = args[i + 1];
            switch (args[i])
            {
                case "--days": days = int.Parse(value, CultureInfo.InvariantCulture); break;
                case "--per-minute": perMinute = int.Parse(value, CultureInfo.InvariantCulture); break;
                case "--series": series = int.Parse(value, CultureInfo.InvariantCulture); break;
                case "--durability": durability = value; break;
                case "--json-out": jsonOut = value; break;
                case "--server-env": environment[value[..value.IndexOf('=', StringComparison.Ordinal)]] = value[(value.IndexOf('=', StringComparison.Ordinal) + 1)..]; break;
                default: throw new ArgumentException($"unknown option {args[i]}.");
            }
        }

        using var limit = new CancellationTokenSource(TimeSpan.FromMinutes(60));
        using var data = new TempDirectory();
        await using ChildServer server = await ChildServer.StartSketchServerAsync(null, data.Path, durability, environment, limit.Token);
        long startRss = ProcFigures.StatusBytes(server.Pid, "VmRSS");
        using GrpcChannel channel = GrpcChannel.ForAddress(server.Address, new GrpcChannelOptions { MaxSendMessageSize = 16 << 20 });
        var ingest = new Ingest.IngestClient(channel);
        var table = new LatencyTable(seed: 7);
        long now = DateTimeOffset.UtcNow.ToUnixTimeMilliseconds();
        long minutes = days * 24L * 60;
        long start = now - (minutes * 60_000);
        long pushed = 0;
        var watch = System.Diagnostics.Stopwatch.StartNew();
        for (long minute = 0; minute < minutes; minute += MinutesPerBatch)
        {
            int count = (int)Math.Min(MinutesPerBatch, minutes - minute) * perMinute;
            for (int s = 0; s < series; s++)
            {
                var batch = new Batch { Metric = "otterbyte.retention.latency_ms" };
                batch.Labels["series"] = s.ToString(CultureInfo.InvariantCulture);
                var values = new double[count];
                table.Fill((minute * perMinute) + (s * 7919L), 1.0, values);
                batch.Values.AddRange(values);
                for (int i = 0; i < count; i++)
                {
                    // Spread evenly over the batch's minutes, oldest first.
                    batch.ValueTimesUnixMs.Add(start + (minute * 60_000) + ((long)i * 60_000 / perMinute));
                }

                await ingest.PushAsync(batch, cancellationToken: limit.Token);
                pushed += count;
            }
        }

        long fillRss = ProcFigures.StatusBytes(server.Pid, "VmRSS");
        var stats = await new Admin.AdminClient(channel).HoldingsAsync(new HoldingsRequest(), cancellationToken: limit.Token);
        var report = new
        {
            Command = "retention " + string.Join(' ', args),
            Days = days,
            PerMinute = perMinute,
            Series = series,
            ValuesPushed = pushed,
            PushSeconds = watch.Elapsed.TotalSeconds,
            stats.Buckets,
            EstimatedBytes = stats.EstimatedBytes,
            EstimatedMbPerSeries = stats.EstimatedBytes / 1e6 / series,
            Tiers = stats.Tiers.Select(t => new { Width = t.BucketWidth.ToTimeSpan().ToString(), t.Buckets, t.EstimatedBytes, BytesPerBucket = t.Buckets == 0 ? 0 : t.EstimatedBytes / (double)t.Buckets }).ToArray(),
            RssStartMb = startRss / 1e6,
            RssAfterFillMb = fillRss / 1e6,
            RssPeakMb = ProcFigures.StatusBytes(server.Pid, "VmHWM") / 1e6,
        };
        string json = JsonSerializer.Serialize(report, new JsonSerializerOptions { WriteIndented = true });
        Console.WriteLine(json);
        if (jsonOut is not null)
        {
            await File.WriteAllTextAsync(jsonOut, json, limit.Token);
        }

        return 0;
    }
}
