using SummaryService.Sketches.Modes;
using SummaryService.Sketches.Tests.Support;

namespace SummaryService.Sketches.Tests.Modes;

/// <summary>
/// Modes are exact while distinct values are few; after that discrete data is bounded by the
/// count-min guarantee, and continuous data stops being counted (its modes come from the log buckets).
/// </summary>
public class ModeSketchTests
{
    [Fact]
    public void Counting_is_exact_while_distinct_values_are_few()
    {
        // Response status codes: a handful of distinct values over a million requests.
        var rng = new Random(41);
        double[] codes = [200, 201, 204, 301, 404, 429, 500, 503];
        double[] weights = [0.80, 0.05, 0.03, 0.02, 0.05, 0.02, 0.02, 0.01];
        var values = Enumerable.Range(0, 1_000_000).Select(_ => Pick(codes, weights, rng)).ToArray();
        var sketch = new ModeSketch();
        sketch.Add(values);

        Assert.True(sketch.IsExact);
        foreach (double code in codes)
        {
            long truth = values.LongCount(v => v == code);
            Assert.Equal(new ModeEstimate(code, truth, truth, truth) { Low = code, High = code, Share = truth / 1e6 }, sketch.Estimate(code));
        }

        var modes = sketch.Modes(5);
        Assert.Equal(200, Assert.Single(modes).Value);
    }

    [Fact]
    public void Every_value_tied_for_the_most_frequent_is_listed()
    {
        var sketch = new ModeSketch();
        sketch.Add([3, 1, 3, 2, 1, 5, 2, 4]);
        var modes = sketch.Modes(10);

        // Counting by hand (common practice): 1, 2 and 3 each occur twice.
        Assert.Equal([1.0, 2.0, 3.0], modes.Select(m => m.Value));
        Assert.All(modes, m => Assert.Equal((2L, 2L, 2L), (m.Count, m.CountLow, m.CountHigh)));
        Assert.Equal(3, sketch.ModeCandidateCount());
        Assert.Equal(2, sketch.Modes(2).Length);
    }

    [Fact]
    public void Minus_zero_and_plus_zero_are_one_value()
    {
        var sketch = new ModeSketch();
        sketch.Add([-0.0, 0.0, 1]);
        Assert.Equal(2, sketch.Estimate(0).Count);
    }

    [Fact]
    public void Resolution_bins_continuous_values_so_they_can_have_a_mode()
    {
        // Latencies in seconds binned to 1 ms: 0.1204 and 0.1196 both count as 0.120.
        var sketch = new ModeSketch(resolution: 0.001);
        sketch.Add([0.1204, 0.1196, 0.1201, 0.2503, 0.0004]);
        var mode = Assert.Single(sketch.Modes(3));
        Assert.Equal(0.12, mode.Value, 12);
        Assert.Equal(3, mode.Count);
    }

    // Twenty seeded trials of a million values, about ten seconds on the project's two-core machine:
    // filter with --filter "Duration!=Long" on a laptop; CI runs it.
    [Fact]
    [Trait("Duration", "Long")]
    public void A_value_holding_five_percent_of_a_million_is_always_the_mode()
    {
        for (int seed = 0; seed < 20; seed++)
        {
            // Discrete data: integers, so past the exact limit counting goes on in the count-min form.
            var rng = new Random(seed);
            var values = Enumerable.Range(0, 1_000_000).Select(_ => rng.NextDouble() < 0.05 ? 123.0 : Math.Floor(rng.NextDouble() * 100_000)).ToArray();
            var sketch = new ModeSketch();
            sketch.Add(values);

            Assert.False(sketch.IsExact);
            var mode = Assert.Single(sketch.Modes(10));
            Assert.Equal(123.0, mode.Value);
            long truth = values.LongCount(v => v == 123.0);
            Assert.InRange(truth, mode.CountLow, mode.CountHigh);
        }
    }

    [Fact]
    public void Continuous_data_stops_being_counted_once_the_exact_counter_overflows()
    {
        // Non-integral values past the 256 exact keys: no count-min table is built or fed.
        var rng = new Random(46);
        var values = Enumerable.Range(0, 100_000).Select(_ => rng.NextDouble() < 0.05 ? 123.0 : rng.NextDouble() * 1000).ToArray();
        var sketch = new ModeSketch();
        sketch.Add(values.AsSpan(0, 50_000));
        foreach (double v in values.AsSpan(50_000))
        {
            sketch.Add(v);
        }

        Assert.True(sketch.IsContinuous);
        Assert.False(sketch.IsExact);
        Assert.True(sketch.TableCounters.IsEmpty);
        Assert.Empty(sketch.Modes(10));
        Assert.Equal(values.Length, sketch.Count);
        Assert.Equal((0L, 0L, values.Length), (sketch.Estimate(123).Count, sketch.Estimate(123).CountLow, sketch.Estimate(123).CountHigh));
    }

    [Fact]
    public void Integers_stay_discrete_and_a_merge_with_continuous_data_is_continuous()
    {
        var integers = new ModeSketch();
        integers.Add(Enumerable.Range(0, 1000).Select(i => (double)(i % 400)).ToArray());
        var continuous = new ModeSketch();
        continuous.Add(Enumerable.Range(0, 1000).Select(i => i + 0.5).ToArray());
        Assert.False(integers.IsContinuous);
        Assert.False(integers.TableCounters.IsEmpty);
        Assert.True(continuous.IsContinuous);

        var exact = new ModeSketch();
        exact.Add([1.0, 1.0, 2.0]);
        exact.Merge(continuous);
        integers.Merge(continuous);

        Assert.True(exact.IsContinuous);
        Assert.True(integers.IsContinuous);
        Assert.Equal(2000, integers.Count);
        Assert.Equal(1003, exact.Count);
    }

    [Fact]
    public void Count_intervals_hold_the_true_counts_at_the_stated_probability()
    {
        // Zipf-like key popularity over 20,000 distinct keys: many light keys collide in the table.
        var rng = new Random(43);
        var values = Enumerable.Range(0, 1_000_000).Select(_ => Math.Floor(Math.Exp(rng.NextDouble() * Math.Log(20_000)))).ToArray();
        var truth = values.GroupBy(v => v).ToDictionary(g => g.Key, g => (long)g.Count());
        var sketch = new ModeSketch();
        sketch.Add(values);
        Assert.False(sketch.IsExact);

        // Count-min guarantee (Cormode & Muthukrishnan 2005, Theorem 1): estimate ≥ truth always, and
        // estimate ≤ truth + εN with probability ≥ 1 − δ, ε = e/w, δ = e^−d.
        int misses = 0;
        foreach (var (value, count) in truth)
        {
            var estimate = sketch.Estimate(value);
            Assert.True(estimate.CountHigh >= count, $"estimate {estimate.CountHigh} below the true count {count} for {value}");
            if (estimate.CountLow > count)
            {
                misses++;
            }
        }

        double share = (double)misses / truth.Count;
        Assert.True(share <= sketch.FailureProbability, $"{share:P3} of keys fell outside their interval; δ = {sketch.FailureProbability:P3}");

        // Keys never seen are bounded the same way.
        var absent = Enumerable.Range(0, 10_000).Select(i => -1.0 - i).Select(sketch.Estimate);
        Assert.All(absent, e => Assert.Equal(0, e.CountLow));
    }

    [Fact]
    public void Merged_sketches_keep_exact_counts_and_bounded_estimates()
    {
        var exactParts = Enumerable.Range(0, 4).Select(_ => new ModeSketch()).ToArray();
        var big = new ModeSketch();
        var rng = new Random(44);
        var values = Enumerable.Range(0, 400_000).Select(_ => rng.NextDouble() < 0.1 ? 7.0 : Math.Round(rng.NextDouble() * 5000)).ToArray();
        for (int i = 0; i < values.Length; i++)
        {
            exactParts[i % 4].Add(values[i]);
        }

        big.Add(values);
        var merged = new ModeSketch();
        foreach (var part in exactParts)
        {
            merged.Merge(part);
        }

        long truth = values.LongCount(v => v == 7.0);
        var estimate = merged.Estimate(7.0);
        Assert.InRange(truth, estimate.CountLow, estimate.CountHigh);
        Assert.Equal(values.Length, merged.Count);
        Assert.Equal(7.0, merged.Modes(3)[0].Value);
        Assert.Equal(big.Modes(3)[0].Value, merged.Modes(3)[0].Value);
    }

    [Fact]
    public void A_ten_value_sketch_allocates_no_count_min_table()
    {
        var sketch = new ModeSketch();
        sketch.Add([1, 2, 3, 4, 5, 6, 7, 8, 9, 10]);
        Assert.True(sketch.IsExact);
        Assert.True(sketch.TableCounters.IsEmpty);
    }

    // Span adds hash a chunk of keys before updating the table; the updates and candidate changes
    // must be exactly those of one Add per value, across the switch from exact counts, for any
    // table depth (odd depths leave the last row alone in its hash word) and with binning.
    [Theory]
    [InlineData(0.0, ModeSketch.DefaultDepth)]
    [InlineData(0.0, 1)]
    [InlineData(0.0, 4)]
    [InlineData(0.01, 3)]
    public void Span_and_single_value_adds_give_the_same_sketch(double resolution, int depth)
    {
        var rng = new Random(45);
        // Integral at resolution 0, so the data is discrete and the count-min form is reached.
        var values = Enumerable.Range(0, 200_000).Select(_ => rng.NextDouble() < 0.02 ? 42.0 : Math.Round(1000 * Math.Exp(3 + rng.NextDouble()))).ToArray();
        var one = new ModeSketch(resolution, depth: depth);
        var many = new ModeSketch(resolution, depth: depth);
        foreach (double v in values)
        {
            one.Add(v);
        }

        for (int start = 0; start < values.Length; start += 997)
        {
            many.Add(values.AsSpan(start, Math.Min(997, values.Length - start)));
        }

        Assert.False(many.IsExact);
        Assert.Equal(Serialization.SketchCodec.ToState(one), Serialization.SketchCodec.ToState(many));
    }

    private static double Pick(double[] values, double[] weights, Random rng)
    {
        double u = rng.NextDouble();
        for (int i = 0; i < values.Length; i++)
        {
            u -= weights[i];
            if (u < 0)
            {
                return values[i];
            }
        }

        return values[^1];
    }
}
