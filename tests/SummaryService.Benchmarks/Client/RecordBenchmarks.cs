using System.Net;
using System.Net.Sockets;
using BenchmarkDotNet.Attributes;
using SummaryService.Client;
using SummaryService.Client.Recording;

namespace SummaryService.Benchmarks.Client;

/// <summary>
/// The producer's cost of <c>MeasurementRecorder.Record</c> on one thread: through the series-key
/// cache (metric and two labels given every time) and through a resolved <see cref="RecordedSeries"/>.
/// The recorder points at a loopback port nobody listens on, so nothing is sent while the buffer
/// (large enough for every iteration's values, none dropped) takes the values; allocated bytes are the
/// per-series buffers and batch copies, amortized over the values they hold.
/// </summary>
[MemoryDiagnoser]
public class RecordBenchmarks
{
    private const int Values = 1 << 19;

    private SummaryClient _client = null!;
    private MeasurementRecorder _recorder = null!;
    private RecordedSeries _series = null!;

    [GlobalSetup]
    public void OpenClient()
    {
        using var listener = new TcpListener(IPAddress.Loopback, 0);
        listener.Start();
        int unused = ((IPEndPoint)listener.LocalEndpoint).Port;
        listener.Stop();
        _client = new SummaryClient(new SummaryClientOptions { Address = new Uri($"http://127.0.0.1:{unused}") });
    }

    [IterationSetup]
    public void StartRecorder()
    {
        _recorder = new MeasurementRecorder(_client, new MeasurementRecorderOptions
        {
            BufferCapacity = 2L * Values,
            FlushInterval = TimeSpan.FromHours(1),
            MaxBackoff = TimeSpan.FromSeconds(30),
            DisposeTimeout = TimeSpan.Zero,
        });
        _series = _recorder.Series("bench.checkout.latency", ("region", "north"), ("route", "/pay"));
    }

    [IterationCleanup]
    public void StopRecorder() => _recorder.DisposeAsync().AsTask().GetAwaiter().GetResult();

    [GlobalCleanup]
    public void CloseClient() => _client.Dispose();

    [Benchmark(OperationsPerInvoke = Values, Baseline = true)]
    public void Through_the_series_cache()
    {
        for (int i = 0; i < Values; i++)
        {
            _recorder.Record("bench.checkout.latency", [("region", "north"), ("route", "/pay")], i & 1023);
        }
    }

    [Benchmark(OperationsPerInvoke = Values)]
    public void Through_a_resolved_series()
    {
        for (int i = 0; i < Values; i++)
        {
            _series.Record(i & 1023);
        }
    }
}
