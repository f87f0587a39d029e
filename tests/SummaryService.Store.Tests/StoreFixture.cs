using Microsoft.Extensions.Time.Testing;
using SummaryService.Sketches.Summaries;

namespace SummaryService.Store.Tests;

/// <summary>A store on a test clock with small tiers so that rollup and retention happen within a test.</summary>
internal sealed class StoreFixture
{
    /// <summary>1 s buckets for 20 s, 5 s for 2 min, 30 s for 10 min.</summary>
    public static readonly IReadOnlyList<TierOptions> SmallTiers =
    [
        new(TimeSpan.FromSeconds(1), TimeSpan.FromSeconds(20)),
        new(TimeSpan.FromSeconds(5), TimeSpan.FromMinutes(2)),
        new(TimeSpan.FromSeconds(30), TimeSpan.FromMinutes(10)),
    ];

    public StoreFixture(StoreOptions? options = null)
    {
        Clock = new FakeTimeProvider(DateTimeOffset.FromUnixTimeMilliseconds(1_800_000_000_000));
        Store = new ShardedSeriesStore(options ?? new StoreOptions { Tiers = SmallTiers, ShardCount = 4 }, Clock);
    }

    public FakeTimeProvider Clock { get; }

    public ShardedSeriesStore Store { get; }

    public long NowMs => Clock.GetUtcNow().ToUnixTimeMilliseconds();

    public AppendResult Append(SeriesBatch batch) => Store.AppendAsync(batch).AsTask().GetAwaiter().GetResult();

    public static SeriesBatch Batch(string metric, double[] values, long timeMs = 0, params (string Key, string Value)[] labels) => new()
    {
        Metric = metric,
        Labels = labels.ToDictionary(l => l.Key, l => l.Value),
        Values = values,
        TimeUnixMs = timeMs,
    };

    public WindowSummary Query(string metric, long fromMs, long toMs, params string[] groupBy) =>
        Store.Summarize(new SeriesSelector(metric), new TimeWindow(fromMs, toMs), groupBy, new SummaryOptions());
}

/// <summary>
/// The window queries the tests ask, in their synchronous form: the local store's reads complete
/// before they return, so waiting on them here blocks on nothing.
/// </summary>
internal static class SyncReads
{
    public static WindowSummary Summarize(this ISeriesStore store, SeriesSelector selector, TimeWindow window, IReadOnlyList<string> groupBy, SummaryOptions options) =>
        store.SummarizeAsync(selector, window, groupBy, options).AsTask().GetAwaiter().GetResult();

    public static IReadOnlyList<WindowSummary> SummarizeSteps(this ISeriesStore store, SeriesSelector selector, TimeWindow window, long stepMs, IReadOnlyList<string> groupBy, SummaryOptions options) =>
        store.SummarizeStepsAsync(selector, window, stepMs, groupBy, options).AsTask().GetAwaiter().GetResult();

    public static IReadOnlyList<SeriesInfo> ListSeries(this ISeriesStore store, string? metric = null) =>
        store.ListSeriesAsync(metric).AsTask().GetAwaiter().GetResult();
}
