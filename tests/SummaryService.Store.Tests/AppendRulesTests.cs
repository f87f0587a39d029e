using SummaryService.Sketches.Summaries;

namespace SummaryService.Store.Tests;

/// <summary>Every rejected batch names its fault and leaves the store exactly as it was.</summary>
public class AppendRulesTests
{
    public static TheoryData<string, RejectReason, string> BadBatches => new()
    {
        { "empty metric", RejectReason.InvalidMetric, "metric" },
        { "metric with a space", RejectReason.InvalidMetric, "metric" },
        { "overlong metric", RejectReason.InvalidMetric, "metric" },
        { "bad label name", RejectReason.InvalidLabel, "labels[1route]" },
        { "empty label value", RejectReason.InvalidLabel, "labels[route]" },
        { "too many labels", RejectReason.TooManyLabels, "labels" },
        { "NaN value", RejectReason.NonFiniteValue, "values[2]" },
        { "infinite value", RejectReason.NonFiniteValue, "values[0]" },
        { "no values", RejectReason.InvalidBatchSize, "values" },
        { "too many values", RejectReason.InvalidBatchSize, "values" },
        { "time list of the wrong length", RejectReason.InvalidBatchSize, "value_times_unix_ms" },
        { "older than retention", RejectReason.TooOld, "time_unix_ms" },
        { "one value too far ahead", RejectReason.TooFarInFuture, "value_times_unix_ms[1]" },
    };

    [Theory]
    [MemberData(nameof(BadBatches))]
    public void A_bad_batch_is_rejected_with_its_field_and_changes_nothing(string name, RejectReason reason, string field)
    {
        var fixture = new StoreFixture(new StoreOptions { Tiers = StoreFixture.SmallTiers, MaxLabels = 3, MaxValuesPerBatch = 10, MaxMetricLength = 20 });
        fixture.Append(StoreFixture.Batch("svc.latency", [1, 2, 3], 0, ("route", "/a")));
        var before = Snapshot(fixture);

        var error = Assert.Throws<StoreRejectedException>(() => fixture.Append(BadBatch(name, fixture.NowMs)));
        Assert.Equal(reason, error.Reason);
        Assert.Equal(field, error.Field);
        Assert.False(string.IsNullOrWhiteSpace(error.Message));
        Assert.Equal(before, Snapshot(fixture));
    }

    [Fact]
    public void The_series_limit_refuses_new_series_and_keeps_old_ones_writable()
    {
        var fixture = new StoreFixture(new StoreOptions { Tiers = StoreFixture.SmallTiers, MaxSeries = 2 });
        fixture.Append(StoreFixture.Batch("a.x", [1]));
        fixture.Append(StoreFixture.Batch("b.x", [1]));
        var error = Assert.Throws<StoreRejectedException>(() => fixture.Append(StoreFixture.Batch("c.x", [1])));
        Assert.Equal(RejectReason.SeriesLimit, error.Reason);
        Assert.True(error.IsLimit);
        Assert.Equal(2, fixture.Store.GetStats().Series);
        fixture.Append(StoreFixture.Batch("a.x", [2]));
    }

    [Fact]
    public void The_tenant_limit_counts_series_per_metric_prefix()
    {
        var fixture = new StoreFixture(new StoreOptions { Tiers = StoreFixture.SmallTiers, MaxSeriesPerTenant = 1 });
        fixture.Append(StoreFixture.Batch("payments.latency", [1]));
        var error = Assert.Throws<StoreRejectedException>(() => fixture.Append(StoreFixture.Batch("payments.errors", [1])));
        Assert.Equal(RejectReason.SeriesLimit, error.Reason);
        Assert.Contains("payments", error.Message);
        fixture.Append(StoreFixture.Batch("search.latency", [1]));
    }

    [Fact]
    public void The_memory_budget_refuses_new_buckets()
    {
        var fixture = new StoreFixture(new StoreOptions { Tiers = StoreFixture.SmallTiers, MemoryBudgetBytes = 4000 });
        fixture.Append(StoreFixture.Batch("a.x", [1]));
        var error = Assert.Throws<StoreRejectedException>(() =>
        {
            for (int i = 0; i < 100; i++)
            {
                fixture.Append(StoreFixture.Batch("a.x", [1], fixture.NowMs - (i * 1000)));
            }
        });
        Assert.Equal(RejectReason.MemoryLimit, error.Reason);
    }

    [Fact]
    public void A_repeated_producer_sequence_is_acknowledged_as_duplicate_and_not_counted()
    {
        var fixture = new StoreFixture();
        var batch = StoreFixture.Batch("q.depth", [4, 5]) with { Producer = "worker-7", Sequence = 1 };
        Assert.Equal(new AppendResult(2, false), fixture.Append(batch));
        Assert.Equal(new AppendResult(0, true), fixture.Append(batch));
        Assert.Equal(new AppendResult(1, false), fixture.Append(batch with { Values = new double[] { 6 }, Sequence = 2 }));
        long now = fixture.NowMs;
        Assert.Equal(3, fixture.Query("q.depth", now - 1000, now + 1000).Groups[0].Summary.Count);
    }

    [Fact]
    public void Late_values_inside_retention_land_in_their_bucket()
    {
        var fixture = new StoreFixture();
        long now = fixture.NowMs;
        fixture.Append(StoreFixture.Batch("late.x", [7], now - 300_000));
        var old = fixture.Query("late.x", now - 301_000, now - 299_000);
        Assert.Equal(1, old.Groups[0].Summary.Count);
        Assert.Empty(fixture.Query("late.x", now - 1000, now + 1000).Groups[0].Summary.Quantiles);
    }

    [Fact]
    public void Retention_drops_buckets_past_the_last_tier_and_then_the_series()
    {
        var fixture = new StoreFixture();
        fixture.Append(StoreFixture.Batch("gone.x", [1, 2, 3]));
        fixture.Clock.Advance(TimeSpan.FromMinutes(11));
        fixture.Store.Roll();
        Assert.Equal(0, fixture.Store.GetStats().Series);
        Assert.Empty(fixture.Store.ListSeries());
    }

    [Fact]
    public void Delete_removes_a_series_and_frees_its_slot()
    {
        var fixture = new StoreFixture(new StoreOptions { Tiers = StoreFixture.SmallTiers, MaxSeries = 1 });
        fixture.Append(StoreFixture.Batch("a.x", [1]));
        Assert.NotNull(fixture.Store.Remove(new SeriesKey("a.x")));
        Assert.Null(fixture.Store.Remove(new SeriesKey("a.x")));
        fixture.Append(StoreFixture.Batch("b.x", [1]));
        Assert.Equal("b.x", Assert.Single(fixture.Store.ListSeries()).Key.Metric);
    }

    [Fact]
    public void A_window_with_from_not_before_to_is_refused()
    {
        var fixture = new StoreFixture();
        var error = Assert.Throws<StoreRejectedException>(() => fixture.Query("a.x", 10, 10));
        Assert.Equal(RejectReason.InvalidWindow, error.Reason);
        var bad = Assert.Throws<StoreRejectedException>(() => fixture.Store.Summarize(new SeriesSelector("a.x"), new TimeWindow(0, 10), [], new SummaryOptions { Quantiles = [1.5] }));
        Assert.Equal(RejectReason.InvalidQuery, bad.Reason);
    }

    private static SeriesBatch BadBatch(string name, long now) => name switch
    {
        "empty metric" => StoreFixture.Batch("", [1]),
        "metric with a space" => StoreFixture.Batch("svc latency", [1]),
        "overlong metric" => StoreFixture.Batch(new string('m', 21), [1]),
        "bad label name" => StoreFixture.Batch("svc.latency", [1], 0, ("1route", "x")),
        "empty label value" => StoreFixture.Batch("svc.latency", [1], 0, ("route", "")),
        "too many labels" => StoreFixture.Batch("svc.latency", [1], 0, ("a", "1"), ("b", "2"), ("c", "3"), ("d", "4")),
        "NaN value" => StoreFixture.Batch("svc.latency", [1, 2, double.NaN], 0, ("route", "/a")),
        "infinite value" => StoreFixture.Batch("svc.latency", [double.PositiveInfinity], 0, ("route", "/a")),
        "no values" => StoreFixture.Batch("svc.latency", [], 0, ("route", "/a")),
        "too many values" => StoreFixture.Batch("svc.latency", new double[11], 0, ("route", "/a")),
        "time list of the wrong length" => StoreFixture.Batch("svc.latency", [1, 2], 0, ("route", "/a")) with { ValueTimesUnixMs = new long[] { now } },
        "older than retention" => StoreFixture.Batch("svc.latency", [1], now - 700_000, ("route", "/a")),
        "one value too far ahead" => StoreFixture.Batch("svc.latency", [1, 2], 0, ("route", "/a")) with { ValueTimesUnixMs = new long[] { now, now + 600_000 } },
        _ => throw new ArgumentOutOfRangeException(nameof(name), name, "unknown case"),
    };

    private static string Snapshot(StoreFixture fixture)
    {
        long now = fixture.NowMs;
        var stats = fixture.Store.GetStats();
        var answer = fixture.Query("svc.latency", now - 600_000, now + 600_000);
        var summary = answer.Groups.Single().Summary;
        return $"{stats.Series}/{stats.Buckets}/{stats.EstimatedBytes}/{summary.Count}/{summary.Mean}/{summary.Max}";
    }
}
