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
/// [--series 1] [--durability wal] [--server-env Name=Value] [--json-out path]</c> starts the
/// server on its default settings, pushes every series' values for the whole span with one
/// timestamp per value (ten minutes of values per batch, ending now): the last hour first and a
/// snapshot of it, then the older days oldest first. Once rollup has moved what it moves, it reads
/// the store's holdings, the process's resident memory, the segment files on disk and the time of
/// a snapshot with the aged data; then restarts the server on the same data and times the first
/// and the repeated window queries (<see cref="RetentionQueries"/>).
/// </summary>
/// <remarks>
/// The holdings' <c>Buckets</c> count every bucket, in memory or in a segment file; their
/// <c>EstimatedBytes</c> count memory only. Bytes per aged bucket therefore come from the segment
/// files (<see cref="SummaryService.Store.Segments.SegmentDirectoryFigures"/>), not from the holdings.
/// </remarks>
public static class RetentionRun
{
    /// <summary>Minutes of values pushed first, as the head, before the snapshot that has no aged data.</summary>
    private const int HeadMinutes = 60;

    public static async Task<int> RunAsync(IReadOnlyList<string> args)
    {
        int days = 7;
        int perMinute = 1000;
        int series = 1;
        string durability = "wal";
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

        using var limit = new CancellationTokenSource(TimeSpan.FromHours(3));
        using var data = new TempDirectory();
        ChildServer server = await ChildServer.StartSketchServerAsync(null, data.Path, durability, environment, limit.Token);
        long startRss = ProcFigures.StatusBytes(server.Pid, "VmRSS");
        var fill = new RetentionFill(series, perMinute, days);
        long pushed;
        RetentionFigures figures;
        try
        {
            using GrpcChannel channel = GrpcChannel.ForAddress(server.Address, new GrpcChannelOptions { MaxSendMessageSize = 16 << 20 });
            var ingest = new Ingest.IngestClient(channel);
            var admin = new Admin.AdminClient(channel);
            var watch = System.Diagnostics.Stopwatch.StartNew();

            // The head first (the last hour), then a snapshot with no aged data; then the other days, oldest first.
            pushed = await fill.PushAsync(ingest, fill.Minutes - HeadMinutes, fill.Minutes, limit.Token);
            double?[] snapshotHeadOnly = durability == "none" ? [] : [await RetentionFigures.SnapshotMsAsync(admin, limit.Token), await RetentionFigures.SnapshotMsAsync(admin, limit.Token)];
            pushed += await fill.PushAsync(ingest, 0, fill.Minutes - HeadMinutes, limit.Token);
            double pushSeconds = watch.Elapsed.TotalSeconds;
            long fillRss = ProcFigures.StatusBytes(server.Pid, "VmRSS");
            figures = await RetentionFigures.SettleAsync(admin, server, data.Path, durability, limit.Token);
            figures = figures with { PushSeconds = pushSeconds, RssAfterFillMb = fillRss / 1e6, SnapshotHeadOnlyMs = snapshotHeadOnly };
        }
        finally
        {
            await server.DisposeAsync();
        }

        // A restart on the same data directory, then the first and the repeated queries.
        var restart = System.Diagnostics.Stopwatch.StartNew();
        await using (ChildServer reopened = await ChildServer.StartSketchServerAsync(null, data.Path, durability, environment, limit.Token))
        {
            double restartSeconds = restart.Elapsed.TotalSeconds;
            using GrpcChannel channel = GrpcChannel.ForAddress(reopened.Address);
            figures = figures with { RestartSeconds = restartSeconds, Queries = await RetentionQueries.MeasureAsync(new Query.QueryClient(channel), new Admin.AdminClient(channel), fill, limit.Token) };
        }

        var report = new
        {
            Command = "retention " + string.Join(' ', args),
            Days = days,
            PerMinute = perMinute,
            Series = series,
            ValuesPushed = pushed,
            RssStartMb = startRss / 1e6,
            Figures = figures,
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
