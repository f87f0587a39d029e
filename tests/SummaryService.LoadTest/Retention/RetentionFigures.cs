using SummaryService.Contract.V1;
using SummaryService.LoadTest.Processes;
using SummaryService.Store.Segments;

namespace SummaryService.LoadTest.Retention;

/// <summary>What the retention run reports once the fill has settled; times in milliseconds, sizes in MB (10^6 bytes) or bytes as named.</summary>
internal sealed record RetentionFigures
{
    public double PushSeconds { get; init; }

    public double RssAfterFillMb { get; init; }

    public double RssSettledMb { get; init; }

    public double RssPeakMb { get; init; }

    public double SettleSeconds { get; init; }

    /// <summary>Buckets in memory and in segment files together.</summary>
    public ulong Buckets { get; init; }

    /// <summary>Estimated bytes of the buckets in memory only.</summary>
    public ulong EstimatedBytes { get; init; }

    public object[] Tiers { get; init; } = [];

    public SegmentDirectoryFigures? Segments { get; init; }

    /// <summary>Segment bytes on disk per bucket their indexes list.</summary>
    public double SegmentBytesPerBucket { get; init; }

    public double SnapshotDirectoryMb { get; init; }

    /// <summary>Two snapshots in a row with only the last hour pushed (the first also pays for start-up work).</summary>
    public double?[] SnapshotHeadOnlyMs { get; init; } = [];

    /// <summary>Two snapshots in a row once the aged data has left memory.</summary>
    public double?[] SnapshotWithAgedMs { get; init; } = [];

    public double RestartSeconds { get; init; }

    public RetentionQueries? Queries { get; init; }

    /// <summary>Server-side time of one snapshot, through the admin RPC.</summary>
    public static async Task<double?> SnapshotMsAsync(Admin.AdminClient admin, CancellationToken cancellationToken)
    {
        WriteSnapshotReply reply = await admin.WriteSnapshotAsync(new WriteSnapshotRequest(), cancellationToken: cancellationToken);
        return reply.Elapsed.ToTimeSpan().TotalMilliseconds;
    }

    /// <summary>
    /// Waits until rollup has moved what it moves (estimated bytes unchanged over 15 s, at most 10
    /// minutes), then takes two snapshots and reads holdings, memory and the segment directory.
    /// </summary>
    public static async Task<RetentionFigures> SettleAsync(Admin.AdminClient admin, ChildServer server, string dataDirectory, string durability, CancellationToken cancellationToken)
    {
        var watch = System.Diagnostics.Stopwatch.StartNew();
        HoldingsReply stats = await admin.HoldingsAsync(new HoldingsRequest(), cancellationToken: cancellationToken);
        for (int polls = 0; polls < 40; polls++)
        {
            await Task.Delay(TimeSpan.FromSeconds(15), cancellationToken);
            HoldingsReply next = await admin.HoldingsAsync(new HoldingsRequest(), cancellationToken: cancellationToken);
            bool settled = next.EstimatedBytes == stats.EstimatedBytes;
            stats = next;
            if (settled)
            {
                break;
            }
        }

        double settleSeconds = watch.Elapsed.TotalSeconds;
        double?[] snapshots = durability == "none" ? [] : [await SnapshotMsAsync(admin, cancellationToken), await SnapshotMsAsync(admin, cancellationToken)];
        stats = await admin.HoldingsAsync(new HoldingsRequest(), cancellationToken: cancellationToken);
        var segments = SegmentDirectoryFigures.Of(Path.Combine(dataDirectory, "segments"));
        string snapshotDirectory = Path.Combine(dataDirectory, "snapshots");
        return new RetentionFigures
        {
            SettleSeconds = settleSeconds,
            RssSettledMb = ProcFigures.StatusBytes(server.Pid, "VmRSS") / 1e6,
            RssPeakMb = ProcFigures.StatusBytes(server.Pid, "VmHWM") / 1e6,
            Buckets = stats.Buckets,
            EstimatedBytes = stats.EstimatedBytes,
            Tiers = [.. stats.Tiers.Select(t => new { Width = t.BucketWidth.ToTimeSpan().ToString(), t.Buckets, t.EstimatedBytes })],
            Segments = segments,
            SegmentBytesPerBucket = segments.Buckets == 0 ? 0 : segments.Bytes / (double)segments.Buckets,
            SnapshotDirectoryMb = Directory.Exists(snapshotDirectory) ? Directory.EnumerateFiles(snapshotDirectory, "*", SearchOption.AllDirectories).Sum(f => new FileInfo(f).Length) / 1e6 : 0,
            SnapshotWithAgedMs = snapshots,
        };
    }
}
