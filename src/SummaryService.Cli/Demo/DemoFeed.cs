using Grpc.Core;
using SummaryService.Contract.V1;

namespace SummaryService.Cli.Demo;

/// <summary>
/// Draws the scenario's measurements for a span of time and pushes them over one push stream, one
/// batch per series with a timestamp per value. Every batch carries the next sequence of one producer
/// name unique to this run, so a retried batch would never count twice and a second demo run is not
/// mistaken for a repeat of the first.
/// </summary>
public sealed class DemoFeed : IAsyncDisposable
{
    private const int BatchLimit = 5000;

    private static readonly double[] RegionShares = OtterbyteScenario.Regions.Select(r => r.Share).ToArray();

    private readonly AsyncDuplexStreamingCall<Batch, PushReply> _call;
    private readonly Task _reading;
    private readonly DemoRandom _random;
    private readonly string _producer;
    private readonly List<double>[,] _values;
    private readonly List<long>[,] _times;
    private ulong _sequence;
    private long _accepted;
    private PushReply? _failure;

    /// <summary>Opens the stream.</summary>
    public DemoFeed(Ingest.IngestClient ingest, DemoRandom random, string producer)
    {
        ArgumentNullException.ThrowIfNull(ingest);
        _random = random;
        _producer = producer;
        int services = OtterbyteScenario.Services.Count;
        int regions = OtterbyteScenario.Regions.Count;
        _values = new List<double>[services, regions];
        _times = new List<long>[services, regions];
        for (int s = 0; s < services; s++)
        {
            for (int r = 0; r < regions; r++)
            {
                _values[s, r] = new List<double>(BatchLimit);
                _times[s, r] = new List<long>(BatchLimit);
            }
        }

        // The demo's own stream is not tied to Ctrl+C: on a stop it finishes what it sent and closes cleanly.
        _call = ingest.PushStream(cancellationToken: CancellationToken.None);
        _reading = ReadRepliesAsync();
    }

    /// <summary>Values the server has acknowledged so far.</summary>
    public long Accepted => Interlocked.Read(ref _accepted);

    /// <summary>The first refused batch, if any.</summary>
    public PushReply? Failure => Volatile.Read(ref _failure);

    /// <summary>
    /// Draws <paramref name="perSecond"/> values per service for every second of [<paramref name="fromMs"/>,
    /// <paramref name="toMs"/>), at evenly spread instants, split across regions by their share; values at
    /// or after <paramref name="deployMs"/> come from the deployed release.
    /// </summary>
    public async Task FeedAsync(long fromMs, long toMs, int perSecond, long deployMs, CancellationToken cancellationToken)
    {
        for (long second = fromMs; second < toMs; second += 1000)
        {
            cancellationToken.ThrowIfCancellationRequested();
            for (int s = 0; s < OtterbyteScenario.Services.Count; s++)
            {
                DemoService service = OtterbyteScenario.Services[s];
                for (int i = 0; i < perSecond; i++)
                {
                    long at = Math.Min(toMs - 1, second + (i * 1000L / perSecond));
                    int region = _random.Pick(RegionShares);
                    _values[s, region].Add(service.Draw(_random, at >= deployMs));
                    _times[s, region].Add(at);
                    if (_values[s, region].Count >= BatchLimit)
                    {
                        await SendAsync(s, region).ConfigureAwait(false);
                    }
                }
            }
        }

        await FlushAsync().ConfigureAwait(false);
    }

    /// <summary>Sends every partly filled batch.</summary>
    public async Task FlushAsync()
    {
        for (int s = 0; s < OtterbyteScenario.Services.Count; s++)
        {
            for (int r = 0; r < OtterbyteScenario.Regions.Count; r++)
            {
                if (_values[s, r].Count > 0)
                {
                    await SendAsync(s, r).ConfigureAwait(false);
                }
            }
        }
    }

    /// <summary>Closes the stream and waits for every reply; a failed stream throws here.</summary>
    public async Task CompleteAsync()
    {
        await _call.RequestStream.CompleteAsync().ConfigureAwait(false);
        await _reading.ConfigureAwait(false);
    }

    /// <inheritdoc/>
    public ValueTask DisposeAsync()
    {
        _call.Dispose();
        return ValueTask.CompletedTask;
    }

    private async Task SendAsync(int service, int region)
    {
        DemoService s = OtterbyteScenario.Services[service];
        var batch = new Batch { Metric = s.Metric, Producer = _producer, Sequence = ++_sequence };
        batch.Labels.Add("service", s.Service);
        batch.Labels.Add("route", s.Route);
        batch.Labels.Add("region", OtterbyteScenario.Regions[region].Region);
        batch.Values.Add(_values[service, region]);
        batch.ValueTimesUnixMs.Add(_times[service, region]);
        _values[service, region].Clear();
        _times[service, region].Clear();
        await _call.RequestStream.WriteAsync(batch).ConfigureAwait(false);
    }

    private async Task ReadRepliesAsync()
    {
        await foreach (PushReply reply in _call.ResponseStream.ReadAllAsync().ConfigureAwait(false))
        {
            if (reply.ErrorCode.Length > 0)
            {
                Interlocked.CompareExchange(ref _failure, reply, null);
            }

            Interlocked.Add(ref _accepted, (long)reply.Accepted);
        }
    }
}
