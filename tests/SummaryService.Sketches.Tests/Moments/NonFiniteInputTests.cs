using SummaryService.Sketches.Moments;
using SummaryService.Sketches.Serialization;
using SummaryService.Sketches.Tests.SerializationTests;

namespace SummaryService.Sketches.Tests.MomentsTests;

/// <summary>
/// NaN and ±∞ are refused: Add(span) throws ArgumentOutOfRangeException naming the index of the
/// first bad value, and a refused span leaves every figure of the sketch as it was, because the
/// whole span is checked before anything is folded in.
/// </summary>
public class NonFiniteInputTests
{
    public static TheoryData<double, int> BadValues()
    {
        // Indices at both ends and on either side of the checker's 64-value block boundary.
        var data = new TheoryData<double, int>();
        foreach (double bad in new[] { double.NaN, double.PositiveInfinity, double.NegativeInfinity })
        {
            foreach (int index in new[] { 0, 1, 63, 64, 65, 500, 999 })
            {
                data.Add(bad, index);
            }
        }

        return data;
    }

    [Theory]
    [MemberData(nameof(BadValues))]
    public void Series_sketch_refuses_a_span_naming_the_bad_index_and_stays_unchanged(double bad, int index)
    {
        var sketch = new SeriesSketch(seed: 4);
        sketch.Add(Finite(5000, seed: 1));
        byte[] before = SketchCodec.Serialize(sketch);
        var summaryBefore = sketch.Summarize(SummaryComparison.Options);

        double[] span = Finite(1000, seed: 2);
        span[index] = bad;
        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => sketch.Add(span));

        AssertNamesIndex(ex, bad, index);

        // The bytes cover every part's full state (moments, quantile levels, random state, modes).
        Assert.Equal(before, SketchCodec.Serialize(sketch));
        SummaryComparison.AssertEqual(summaryBefore, sketch.Summarize(SummaryComparison.Options));
    }

    [Theory]
    [MemberData(nameof(BadValues))]
    public void Moment_sketch_refuses_a_span_naming_the_bad_index_and_stays_unchanged(double bad, int index)
    {
        var sketch = new MomentSketch();
        sketch.Add(Finite(5000, seed: 1));
        var before = SketchCodec.ToState(sketch);

        double[] span = Finite(1000, seed: 2);
        span[index] = bad;
        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => sketch.Add(span));

        AssertNamesIndex(ex, bad, index);
        Assert.Equal(before, SketchCodec.ToState(sketch));
        Assert.Equal(5000, sketch.Count);
    }

    [Fact]
    public void Only_the_first_bad_index_is_named()
    {
        var sketch = new SeriesSketch(seed: 4);
        double[] span = Finite(300, seed: 3);
        span[70] = double.PositiveInfinity;
        span[10] = double.NaN;

        var ex = Assert.Throws<ArgumentOutOfRangeException>(() => sketch.Add(span));

        Assert.Contains("values[10]", ex.Message);
        Assert.DoesNotContain("values[70]", ex.Message);
        Assert.Equal(0, sketch.Count);
    }

    [Theory]
    [InlineData(double.NaN)]
    [InlineData(double.PositiveInfinity)]
    [InlineData(double.NegativeInfinity)]
    public void Single_bad_value_is_refused_and_changes_nothing(double bad)
    {
        var series = new SeriesSketch(seed: 4);
        var moments = new MomentSketch();
        series.Add(1.0);
        moments.Add(1.0);
        byte[] before = SketchCodec.Serialize(series);

        Assert.Equal("value", Assert.Throws<ArgumentOutOfRangeException>(() => series.Add(bad)).ParamName);
        Assert.Equal("value", Assert.Throws<ArgumentOutOfRangeException>(() => moments.Add(bad)).ParamName);

        Assert.Equal(before, SketchCodec.Serialize(series));
        Assert.Equal(1, moments.Count);
        Assert.Equal(1.0, moments.Mean);
    }

    private static void AssertNamesIndex(ArgumentOutOfRangeException ex, double bad, int index)
    {
        Assert.Equal("values", ex.ParamName);
        Assert.Contains($"values[{index}]", ex.Message);
        Assert.IsType<double>(ex.ActualValue);
        Assert.Equal(BitConverter.DoubleToInt64Bits(bad), BitConverter.DoubleToInt64Bits((double)ex.ActualValue!));
    }

    private static double[] Finite(int n, int seed)
    {
        var rng = new Random(seed);
        return Enumerable.Range(0, n).Select(_ => (rng.NextDouble() * 100) - 50).ToArray();
    }
}
