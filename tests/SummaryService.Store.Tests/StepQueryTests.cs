using Google.Protobuf;
using MathNet.Numerics.Statistics;
using SummaryService.Sketches.Serialization;
using SummaryService.Sketches.Summaries;

namespace SummaryService.Store.Tests;

/// <summary>A window cut into steps is answered in one call, step by step exactly as one window query per step.</summary>
public class StepQueryTests
{
    private static readonly string[] ByRegion = ["region"];

    [Fact]
    public void Each_step_equals_its_own_window_query_bit_for_bit_across_tiers()
    {
        var (fixture, _) = Filled(seed: 61);
        var rng = new Random(62);
        long[] stepsMs = [700, 1_000, 3_000, 13_000, 60_000, 200_000];
        for (int q = 0; q < 24; q++)
        {
            long from = rng.NextInt64(fixture.NowMs - 720_000, fixture.NowMs - 1_000);
            long to = rng.NextInt64(from + 1, fixture.NowMs + 1);
            long step = stepsMs[q % stepsMs.Length];
            string[] groupBy = q % 2 == 0 ? [] : ByRegion;
            var window = new TimeWindow(from, to);

            // Odd rounds answer the steps first, so their blocks are built by the step call and then
            // read from the cache by the single queries; even rounds the other way round.
            var single = new List<WindowSummary>();
            IReadOnlyList<WindowSummary> steps;
            if (q % 2 == 1)
            {
                steps = fixture.Store.SummarizeSteps(new SeriesSelector("parcel.scan_ms"), window, step, groupBy, new SummaryOptions());
                single.AddRange(EachStep(fixture, window, step, groupBy));
            }
            else
            {
                single.AddRange(EachStep(fixture, window, step, groupBy));
                steps = fixture.Store.SummarizeSteps(new SeriesSelector("parcel.scan_ms"), window, step, groupBy, new SummaryOptions());
            }

            Assert.Equal(single.Count, steps.Count);
            for (int i = 0; i < steps.Count; i++)
            {
                Assert.Equal(single[i].Covered, steps[i].Covered);
                Assert.Equal(single[i].Groups.Count, steps[i].Groups.Count);
                for (int g = 0; g < steps[i].Groups.Count; g++)
                {
                    SummarizedGroup expected = single[i].Groups[g];
                    SummarizedGroup actual = steps[i].Groups[g];
                    Assert.Equal(expected.Labels, actual.Labels);
                    Assert.Equal(expected.SeriesMerged, actual.SeriesMerged);
                    Assert.Equal(SketchCodec.ToState(expected.Sketch).ToByteArray(), SketchCodec.ToState(actual.Sketch).ToByteArray());
                    Assert.Equal(expected.Summary.Count, actual.Summary.Count);
                    Assert.Equal(expected.Summary.Mean, actual.Summary.Mean);
                    Assert.Equal(
                        expected.Summary.Quantiles.Select(e => (e.Value, e.Low, e.High)),
                        actual.Summary.Quantiles.Select(e => (e.Value, e.Low, e.High)));
                }
            }
        }
    }

    [Fact]
    public void Each_step_holds_exactly_the_values_of_its_covered_interval()
    {
        var (fixture, kept) = Filled(seed: 71);
        long horizon = fixture.NowMs - StoreFixture.SmallTiers[^1].RetentionMs;
        var window = new TimeWindow(fixture.NowMs - 700_000, fixture.NowMs);
        var steps = fixture.Store.SummarizeSteps(new SeriesSelector("parcel.scan_ms"), window, 45_000, ByRegion, new SummaryOptions());
        Assert.Equal(16, steps.Count);
        foreach (WindowSummary step in steps)
        {
            foreach (SummarizedGroup group in step.Groups)
            {
                string region = group.Labels["region"];
                var expected = kept
                    .Where(v => v.Region == region && step.Covered.Contains(v.Time) && BucketStillKept(v.Time, horizon))
                    .Select(v => v.Value)
                    .ToArray();
                Assert.Equal(expected.Length, group.Summary.Count);
                if (expected.Length < 2)
                {
                    continue;
                }

                // Reference: MathNet.Numerics Statistics.Mean/Variance (sample variance) over the same values.
                Assert.Equal(expected.Mean(), group.Summary.Mean!.Value, 1e-9 * expected.Mean());
                Assert.Equal(expected.Variance(), group.Summary.Variance!.Value, 1e-8 * expected.Variance());
                Assert.Equal(expected.Min(), group.Summary.Min);
                Assert.Equal(expected.Max(), group.Summary.Max);
            }
        }
    }

    [Fact]
    public void A_step_under_one_millisecond_or_too_many_steps_is_refused_naming_the_step()
    {
        var (fixture, _) = Filled(seed: 81, seconds: 5);
        var window = new TimeWindow(fixture.NowMs - 5_000, fixture.NowMs);
        var zero = Assert.Throws<StoreRejectedException>(() => fixture.Store.SummarizeSteps(new SeriesSelector("parcel.scan_ms"), window, 0, [], new SummaryOptions()));
        Assert.Equal(RejectReason.InvalidQuery, zero.Reason);
        Assert.Equal("step", zero.Field);

        var wide = new TimeWindow(0, (long)ShardedSeriesStore.MaxSteps + 1);
        var many = Assert.Throws<StoreRejectedException>(() => fixture.Store.SummarizeSteps(new SeriesSelector("parcel.scan_ms"), wide, 1, [], new SummaryOptions()));
        Assert.Equal("step", many.Field);
        Assert.Contains((ShardedSeriesStore.MaxSteps + 1).ToString(System.Globalization.CultureInfo.InvariantCulture), many.Message, StringComparison.Ordinal);
    }

    private static IEnumerable<WindowSummary> EachStep(StoreFixture fixture, TimeWindow window, long step, string[] groupBy)
    {
        for (long from = window.FromUnixMs; from < window.ToUnixMs; from += step)
        {
            var range = new TimeWindow(from, Math.Min(from + step, window.ToUnixMs));
            yield return fixture.Store.Summarize(new SeriesSelector("parcel.scan_ms"), range, groupBy, new SummaryOptions());
        }
    }

    // Two series, one second of traffic at a time with some values up to 90 s late, rollup running
    // as the clock moves: after twelve minutes all three of the fixture's tiers hold buckets.
    private static (StoreFixture Fixture, List<(string Region, long Time, double Value)> Kept) Filled(int seed, int seconds = 720)
    {
        var fixture = new StoreFixture();
        var rng = new Random(seed);
        var kept = new List<(string, long, double)>();
        string[] regions = ["north", "south"];
        for (int second = 0; second < seconds; second++)
        {
            fixture.Clock.Advance(TimeSpan.FromSeconds(1));
            long now = fixture.NowMs;
            foreach (string region in regions)
            {
                var values = Enumerable.Range(0, 40).Select(_ => Math.Exp(rng.NextDouble() * 4)).ToArray();
                long late = now - rng.Next(0, 90_000);
                var times = values.Select((_, i) => i % 5 == 0 ? late : now - rng.Next(0, 1000)).ToArray();
                fixture.Append(new SeriesBatch { Metric = "parcel.scan_ms", Labels = new Dictionary<string, string> { ["region"] = region }, Values = values, ValueTimesUnixMs = times });
                for (int i = 0; i < values.Length; i++)
                {
                    kept.Add((region, times[i], values[i]));
                }
            }

            if (second % 7 == 0)
            {
                fixture.Store.Roll();
            }
        }

        fixture.Store.Roll();
        return (fixture, kept);
    }

    private static bool BucketStillKept(long time, long horizon)
    {
        long width = StoreFixture.SmallTiers[^1].WidthMs;
        long bucketStart = time - (((time % width) + width) % width);
        return bucketStart + width > horizon;
    }
}
