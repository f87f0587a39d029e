using System.Collections.Concurrent;
using Microsoft.Extensions.Logging;
using Microsoft.Extensions.Logging.Abstractions;

namespace SummaryService.Client.Recording;

/// <summary>
/// Buffers measurements from any number of threads and delivers them to the server exactly once:
/// values are kept per series, sent when a series' buffer fills (<see cref="MeasurementRecorderOptions.MaxBatchValues"/>)
/// or its oldest value has waited <see cref="MeasurementRecorderOptions.FlushInterval"/>, over one long-lived
/// stream, each batch numbered under the recorder's producer id. A broken connection is retried with
/// exponential back-off and jitter and every unanswered batch resent in order; the server recognises the
/// resends it already applied, so a value is never counted twice. Memory is bounded by
/// <see cref="MeasurementRecorderOptions.BufferCapacity"/> values, with the chosen <see cref="FullBufferPolicy"/>.
/// </summary>
/// <remarks>
/// Recording an existing series takes a cache lookup that allocates nothing, a few interlocked
/// operations and no lock; <see cref="Series"/> resolves a series once for the hottest loops. Each value
/// keeps the time it was recorded, so a value delivered late still lands in its own bucket.
/// </remarks>
public sealed partial class MeasurementRecorder : IAsyncDisposable
{
    private readonly MeasurementRecorderOptions _options;
    private readonly TimeProvider _time;
    private readonly ValueBudget _budget;
    private readonly DeliveryLedger _ledger;
    private readonly IDelivery _delivery;
    private readonly ILogger _logger;
    private readonly ConcurrentDictionary<SeriesIdentity, RecordedSeries> _series = new(new SeriesIdentityComparer());
    private readonly ConcurrentDictionary<SeriesIdentity, RecordedSeries>.AlternateLookup<SeriesLookup> _lookup;
    private readonly CancellationTokenSource _stopSending = new();
    private readonly CancellationTokenSource _stopFlushing = new();
    private readonly Task _sending;
    private readonly Task _flushing;
    private long _dropped;
    private int _sealsInProgress;
    private volatile bool _closed;
    private int _disposed;

    /// <summary>Starts a recorder that sends through <paramref name="client"/>'s channel (and API key); the client must outlive it.</summary>
    /// <param name="client">Where to send.</param>
    /// <param name="options">Buffering and delivery settings; defaults when null.</param>
    /// <param name="logger">Receives refused batches, reconnections and an abandoned final flush.</param>
    public MeasurementRecorder(SummaryClient client, MeasurementRecorderOptions? options = null, ILogger<MeasurementRecorder>? logger = null)
    {
        ArgumentNullException.ThrowIfNull(client);
        _options = options ?? new MeasurementRecorderOptions();
        _options.Validate();
        _time = _options.TimeProvider;
        _logger = (ILogger?)logger ?? NullLogger.Instance;
        _budget = new ValueBudget(_options.BufferCapacity, _time);
        ulong firstSequence = (ulong)Math.Max(1, _time.GetUtcNow().ToUnixTimeMilliseconds() * 1000);
        _ledger = new DeliveryLedger(_budget, _logger, firstSequence, e => BatchRejected?.Invoke(this, e));
        var random = new Random();
        _delivery = _options.Form == UploadForm.Sketches
            ? new SketchDelivery(client.Ingest, _ledger, _options, random)
            : new StreamDelivery(client.Ingest, _ledger, _options, random);
        _lookup = _series.GetAlternateLookup<SeriesLookup>();
        _sending = Task.Run(() => _delivery.RunAsync(_stopSending.Token));
        _flushing = Task.Run(() => FlushEveryIntervalAsync(_stopFlushing.Token));
    }

    /// <summary>Raised (on the delivery thread) for every batch the server refused; the batch is not sent again.</summary>
    public event EventHandler<RejectedBatchEventArgs>? BatchRejected;

    /// <summary>The producer id every batch carries.</summary>
    public string Producer => _options.Producer;

    /// <summary>The counters at this moment.</summary>
    public RecorderStatistics Statistics => new(
        _budget.Held,
        _ledger.ValuesAcknowledged,
        Volatile.Read(ref _dropped),
        _ledger.ValuesRejected,
        _ledger.ValuesAbandoned,
        _ledger.BatchesSent,
        _ledger.BatchesAcknowledged,
        _ledger.Duplicates,
        _ledger.BatchesRejected,
        _ledger.Reconnects);

    /// <summary>Recording calls blocked right now waiting for room in a full buffer (<see cref="FullBufferPolicy.Block"/>); a signal for tests.</summary>
    internal int CallersWaitingForRoom => _budget.Waiters;

    /// <summary>Records one value of the series <paramref name="metric"/> with <paramref name="labels"/> (in any order).</summary>
    /// <exception cref="ArgumentOutOfRangeException">The value is NaN or infinite.</exception>
    /// <exception cref="ArgumentException">A label name is empty or given twice (checked when a series is first seen).</exception>
    public void Record(string metric, ReadOnlySpan<(string Name, string Value)> labels, double value) =>
        Append(Resolve(metric, labels), value);

    /// <summary>Records one value of the unlabelled series <paramref name="metric"/>.</summary>
    public void Record(string metric, double value) => Append(Resolve(metric, []), value);

    /// <summary>The series handle for <paramref name="metric"/> and <paramref name="labels"/>, created on first use; keep it to record without a lookup.</summary>
    public RecordedSeries Series(string metric, params ReadOnlySpan<(string Name, string Value)> labels) => Resolve(metric, labels);

    /// <summary>
    /// Sends everything recorded before the call and waits until the server has answered it (or
    /// <paramref name="cancellationToken"/> fires: the values stay queued and are still delivered).
    /// </summary>
    public async Task FlushAsync(CancellationToken cancellationToken = default)
    {
        ObjectDisposedException.ThrowIf(Volatile.Read(ref _disposed) != 0, this);
        long target = SealEverything();
        await _ledger.WaitResolvedAsync(target, cancellationToken).ConfigureAwait(false);
    }

    private RecordedSeries Resolve(string metric, ReadOnlySpan<(string Name, string Value)> labels)
    {
        ArgumentNullException.ThrowIfNull(metric);
        var key = new SeriesLookup(metric, labels);
        if (_lookup.TryGetValue(key, out RecordedSeries? known))
        {
            return known;
        }

        SeriesIdentity identity = SeriesIdentity.Create(key);
        IntervalSketches? sketches = _options.Form == UploadForm.Sketches
            ? new IntervalSketches(_options.SketchOptions, (long)_options.FlushInterval.TotalMilliseconds)
            : null;
        return _series.GetOrAdd(identity, new RecordedSeries(this, identity, sketches));
    }
}
