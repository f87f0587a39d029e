using System.Diagnostics;
using System.Diagnostics.Metrics;

namespace SummaryService.Server.Telemetry;

/// <summary>
/// The service's own instruments. Created from <see cref="IMeterFactory"/> so each host (and each
/// test server) has its own meter rather than a process-wide static one.
/// </summary>
public sealed class ServerMetrics
{
    /// <summary>Meter name to subscribe to.</summary>
    public const string MeterName = "SummaryService.Server";

    /// <summary>Activity source of the service's own spans (RPC spans come from ASP.NET Core).</summary>
    public const string ActivitySourceName = "SummaryService.Server";

    private readonly Counter<long> _valuesIngested;
    private readonly Counter<long> _batchesRejected;
    private readonly Histogram<double> _snapshotSeconds;
    private readonly Histogram<double> _logSyncSeconds;
    private readonly Histogram<double> _querySeconds;

    /// <summary>Creates the instruments.</summary>
    public ServerMetrics(IMeterFactory meterFactory)
    {
        ArgumentNullException.ThrowIfNull(meterFactory);
        Meter meter = meterFactory.Create(MeterName);
        _valuesIngested = meter.CreateCounter<long>("summary.ingest.values", "{value}", "Values accepted into the store.");
        _batchesRejected = meter.CreateCounter<long>("summary.ingest.rejected_batches", "{batch}", "Batches and uploads refused, by reason.");
        _snapshotSeconds = meter.CreateHistogram<double>("summary.store.snapshot.duration", "s", "Time to write one snapshot generation.");
        _logSyncSeconds = meter.CreateHistogram<double>("summary.store.log_sync.duration", "s", "Time of one write-ahead log fsync.");
        _querySeconds = meter.CreateHistogram<double>("summary.query.duration", "s", "Time to answer one query, by RPC.");
        Meter = meter;
    }

    /// <summary>The meter, for the observable store gauges.</summary>
    public Meter Meter { get; }

    /// <summary>Counts accepted values.</summary>
    public void ValuesIngested(long count) => _valuesIngested.Add(count);

    /// <summary>Counts a refused batch with the reason's name.</summary>
    public void BatchRejected(string reason) => _batchesRejected.Add(1, new KeyValuePair<string, object?>("reason", reason));

    /// <summary>Records a snapshot's duration.</summary>
    public void SnapshotTaken(TimeSpan elapsed) => _snapshotSeconds.Record(elapsed.TotalSeconds);

    /// <summary>Records a log fsync's duration.</summary>
    public void LogSynced(TimeSpan elapsed) => _logSyncSeconds.Record(elapsed.TotalSeconds);

    /// <summary>Attribute naming the RPC, the OpenTelemetry semantic-convention key (<c>rpc.method</c>).</summary>
    public const string RpcMethodAttribute = "rpc.method";

    /// <summary>Records a query's duration under the RPC's method name.</summary>
    public void QueryAnswered(string method, TimeSpan elapsed) => _querySeconds.Record(elapsed.TotalSeconds, new KeyValuePair<string, object?>(RpcMethodAttribute, method));

    /// <summary>Registers the series and bucket gauges, read from the store's figures when collected.</summary>
    public void ObserveStore(Func<(long Series, long Buckets)> figures)
    {
        Meter.CreateObservableGauge("summary.store.series", () => figures().Series, "{series}", "Series held.");
        Meter.CreateObservableGauge("summary.store.buckets", () => figures().Buckets, "{bucket}", "Buckets held across tiers.");
    }

    /// <summary>Elapsed time since a <see cref="TimeProvider.GetTimestamp"/> reading.</summary>
    public static TimeSpan Since(TimeProvider time, long started) => time.GetElapsedTime(started);

    /// <summary>Spans the service starts itself (snapshots, rollups).</summary>
    public static ActivitySource CreateActivitySource() => new(ActivitySourceName);
}
