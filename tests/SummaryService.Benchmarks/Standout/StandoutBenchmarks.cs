using BenchmarkDotNet.Attributes;
using Microsoft.Extensions.Time.Testing;
using SummaryService.Sketches;
using SummaryService.Sketches.Summaries;
using SummaryService.Store;

namespace SummaryService.Benchmarks.Standout;

/// <summary>
/// Which group stands out, at 1,000 label values: the store's window query grouped by the label
/// (what Query.Standout asks the store), then the ranking against prefix/suffix rests; and the
/// same with an earlier window. Target: well under a second per answer on the shared machine.
/// </summary>
[MemoryDiagnoser]
public class StandoutBenchmarks
{
    private const long Minute = 60_000;

    private static readonly StandoutOptions s_byP99Ratio = new() { Measure = StandoutMeasure.QuantileRatio, MeasureQuantile = 0.99 };

    private ShardedSeriesStore _store = null!;
    private TimeWindow _window;
    private TimeWindow _before;
    private StandoutInput[] _groups = null!;

    /// <summary>Label values (hosts), each one series.</summary>
    [Params(1000)]
    public int Groups { get; set; }

    /// <summary>Values per host per window: 2,000 lognormal latencies in each of two hours, in 10-minute batches.</summary>
    [GlobalSetup]
    public void Setup()
    {
        var clock = new FakeTimeProvider(DateTimeOffset.FromUnixTimeMilliseconds(1_800_000_000_000));
        long now = clock.GetUtcNow().ToUnixTimeMilliseconds();
        _store = new ShardedSeriesStore(new StoreOptions { MaxSeries = 100_000, MaxSeriesPerTenant = 100_000 }, clock);
        var random = new Random(5);
        for (int h = 0; h < Groups; h++)
        {
            var labels = new Dictionary<string, string> { ["host"] = $"host-{h:D4}" };
            for (int step = 1; step <= 12; step++)
            {
                double[] values = new double[2000 / 6];
                for (int i = 0; i < values.Length; i++)
                {
                    values[i] = Math.Exp(4 + (0.5 * Normal(random)));
                }

                _store.AppendAsync(new SeriesBatch { Metric = "bench.standout", Labels = labels, Values = values, TimeUnixMs = now - (step * 10 * Minute) + 5_000 }).AsTask().Wait();
            }
        }

        _window = new TimeWindow(now - (60 * Minute), now);
        _before = new TimeWindow(now - (120 * Minute), now - (60 * Minute));
        _groups = Split(_window);
    }

    /// <summary>The prefix/suffix rests alone, from groups already merged: the ranking's merging share.</summary>
    [Benchmark]
    public long RestsOnly()
    {
        long total = 0;
        SeriesSketch[] sketches = [.. _groups.Select(g => g.Sketch)];
        RestMerges.ForEach(sketches, [.. _groups.Select(g => RestMerges.KeyOf(g.Value))], null, (_, rest) => total += rest.Count);
        return total;
    }

    /// <summary>The ranking alone, from groups already merged.</summary>
    [Benchmark]
    public StandoutRanking RankOnly() => SplitComparison.Rank(_groups, null, 0, s_byP99Ratio);

    /// <summary>What the RPC does before mapping: the grouped window query, then the ranking.</summary>
    [Benchmark(Baseline = true)]
    public StandoutRanking QueryAndRank() => SplitComparison.Rank(Split(_window), null, 0, s_byP99Ratio);

    /// <summary>The same with an earlier window: two grouped queries, four rests per group.</summary>
    [Benchmark]
    public StandoutRanking QueryAndRankAgainstBefore() =>
        SplitComparison.Rank(Split(_window), null, 0, s_byP99Ratio, new StandoutBaseline(Split(_before), null, 0));

    private StandoutInput[] Split(TimeWindow window) =>
        [.. _store.ReadAsync(new SeriesSelector("bench.standout", new Dictionary<string, string>()), window, ["host"]).AsTask().GetAwaiter().GetResult().Groups
            .Select(g => new StandoutInput(g.Labels["host"], g.Sketch, g.SeriesMerged))];

    // Box–Muller: a standard normal from two uniforms (common practice).
    private static double Normal(Random random) => Math.Sqrt(-2 * Math.Log(1 - random.NextDouble())) * Math.Cos(2 * Math.PI * random.NextDouble());
}
