using SummaryService.Sketches.Quantiles;

namespace SummaryService.Sketches.Tests.Quantiles;

/// <summary>Order keys sort as the doubles they stand for and give every bit back.</summary>
public class OrderKeysTests
{
    private static readonly double[] Ladder =
    [
        -double.MaxValue, -1e300, -2.5, -1.0, -double.Epsilon, -0.0, 0.0, double.Epsilon, 1e-300, 1.0, 2.5, 1e300, double.MaxValue,
    ];

    [Fact]
    public void Keys_ascend_with_the_values_and_minus_zero_sits_just_below_plus_zero()
    {
        // Reference: the totalOrder predicate of IEEE 754-2008 (§5.10), which on finite values is the
        // numeric order with −0 below +0; the ladder is listed in that order.
        long[] keys = OrderKeys.Of(Ladder);
        for (int i = 1; i < keys.Length; i++)
        {
            Assert.True(keys[i - 1] < keys[i], $"{Ladder[i - 1]} should key below {Ladder[i]}");
        }
    }

    [Fact]
    public void Values_come_back_bit_for_bit()
    {
        var rng = new Random(74);
        double[] values = Ladder.Concat(Enumerable.Range(0, 1000).Select(_ => (rng.NextDouble() - 0.5) * Math.Pow(10, rng.Next(-300, 300)))).ToArray();
        double[] back = OrderKeys.ToValues(OrderKeys.Of(values));
        Assert.Equal(values.Select(BitConverter.DoubleToInt64Bits), back.Select(BitConverter.DoubleToInt64Bits));
        Assert.All(values, v => Assert.Equal(BitConverter.DoubleToInt64Bits(v), BitConverter.DoubleToInt64Bits(OrderKeys.ValueOf(OrderKeys.Of(v)))));
    }

    [Theory]
    [InlineData(1)]
    [InlineData(3)]
    [InlineData(4)]
    [InlineData(7)]
    [InlineData(64)]
    [InlineData(1001)]
    public void Converting_a_span_and_its_range_find_the_extremes_Math_Min_and_Max_find(int n)
    {
        // Reference: Math.Min/Math.Max folds, which order −0 below +0 (.NET documentation).
        var rng = new Random(n);
        double[] values = Enumerable.Range(0, n).Select(i => i % 5 == 0 ? (i % 2 == 0 ? 0.0 : -0.0) : rng.NextDouble() - 0.5).ToArray();
        var keys = new long[n];
        long min = long.MaxValue;
        long max = long.MinValue;
        OrderKeys.Convert(values, keys, ref min, ref max);
        Assert.Equal(OrderKeys.Of(values), keys);
        Assert.Equal(BitConverter.DoubleToInt64Bits(values.Aggregate(Math.Min)), BitConverter.DoubleToInt64Bits(OrderKeys.ValueOf(min)));
        Assert.Equal(BitConverter.DoubleToInt64Bits(values.Aggregate(Math.Max)), BitConverter.DoubleToInt64Bits(OrderKeys.ValueOf(max)));

        (double low, double high) = OrderKeys.RangeOf(values);
        Assert.Equal(BitConverter.DoubleToInt64Bits(values.Aggregate(Math.Min)), BitConverter.DoubleToInt64Bits(low));
        Assert.Equal(BitConverter.DoubleToInt64Bits(values.Aggregate(Math.Max)), BitConverter.DoubleToInt64Bits(high));
    }
}
