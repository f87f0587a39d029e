using SummaryService.Sketches.Summaries;

namespace SummaryService.Sketches.Tests.MomentsTests;

/// <summary>
/// A figure that is undefined for the data is absent (null), never 0: the variance of one value,
/// the skewness of two, the kurtosis of three, the shape of values that are all equal, anything
/// of nothing. Thresholds follow the definitions: s² needs n ≥ 2, G1 needs n ≥ 3 and G2 needs
/// n ≥ 4 (their n − 2 and n − 3 denominators), and both divide by a spread that equal values lack
/// (NIST/SEMATECH e-Handbook 1.3.5.11; common practice).
/// </summary>
public class UndefinedFigureTests
{
    private static readonly SummaryOptions Everything = new()
    {
        Histogram = HistogramSpec.Automatic(4),
        RankOf = [0.0, 1.0],
        Quantiles = [0.0, 0.5, 1.0],
    };

    public enum Feed
    {
        OneAtATime,
        Span,
    }

    [Fact]
    public void Empty_sketch_reports_count_zero_and_every_figure_absent()
    {
        Summary s = new SeriesSketch(seed: 1).Summarize(Everything);

        Assert.Equal(0, s.Count);

        // Every nullable figure on the record, found by reflection so that a figure added later
        // is covered too.
        var present = typeof(Summary).GetProperties()
            .Where(p => Nullable.GetUnderlyingType(p.PropertyType) is not null || p.Name == nameof(Summary.Histogram))
            .Where(p => p.GetValue(s) is not null)
            .Select(p => p.Name)
            .ToArray();
        Assert.Empty(present);
        Assert.Empty(s.Quantiles);
        Assert.Empty(s.Ranks);
        Assert.Empty(s.Modes);
    }

    [Theory]
    [InlineData(Feed.OneAtATime)]
    [InlineData(Feed.Span)]
    public void One_value_has_a_mean_and_extremes_but_no_spread_interval_or_shape(Feed feed)
    {
        Summary s = Summarize(feed, 7.25);

        Assert.Equal(1, s.Count);
        Assert.Equal(7.25, s.Mean);
        Assert.Equal(7.25, s.Min);
        Assert.Equal(7.25, s.Max);
        Assert.Equal(0.0, s.Range);
        Assert.Equal(0.0, s.PopulationVariance); // M2/n is defined for one value: 0.
        Assert.Null(s.Variance);
        Assert.Null(s.StandardDeviation);
        Assert.Null(s.StandardError);
        Assert.Null(s.MeanLow);
        Assert.Null(s.MeanHigh);
        Assert.Null(s.Skewness);
        Assert.Null(s.Kurtosis);
    }

    [Theory]
    [InlineData(Feed.OneAtATime)]
    [InlineData(Feed.Span)]
    public void Two_values_have_a_variance_and_interval_but_no_skewness_or_kurtosis(Feed feed)
    {
        Summary s = Summarize(feed, 1.0, 3.0);

        Assert.Equal(2.0, s.Mean);
        Assert.Equal(2.0, s.Variance); // ((1−2)² + (3−2)²)/(2−1)
        Assert.NotNull(s.MeanLow);
        Assert.NotNull(s.MeanHigh);
        Assert.Null(s.Skewness);
        Assert.Null(s.Kurtosis);
    }

    [Theory]
    [InlineData(Feed.OneAtATime)]
    [InlineData(Feed.Span)]
    public void Three_values_have_a_skewness_but_no_kurtosis(Feed feed)
    {
        Summary s = Summarize(feed, 1.0, 2.0, 6.0);

        Assert.NotNull(s.Skewness);
        Assert.True(s.Skewness > 0, "a long right tail gives positive skewness");
        Assert.Null(s.Kurtosis);
    }

    [Theory]
    [InlineData(Feed.OneAtATime)]
    [InlineData(Feed.Span)]
    public void Four_values_have_both_skewness_and_kurtosis(Feed feed)
    {
        Summary s = Summarize(feed, 1.0, 2.0, 6.0, 7.0);

        Assert.NotNull(s.Skewness);
        Assert.NotNull(s.Kurtosis);
    }

    [Theory]
    [InlineData(Feed.OneAtATime, 2)]
    [InlineData(Feed.Span, 2)]
    [InlineData(Feed.OneAtATime, 1000)]
    [InlineData(Feed.Span, 1000)]
    [InlineData(Feed.Span, 4097)]
    public void All_equal_values_have_zero_variance_and_no_shape(Feed feed, int n)
    {
        // 0.1 and 10000000.1 are not exact binary fractions, so a span's provisional mean carries
        // rounding; the spread must still come out exactly 0, not a rounding residue that would
        // turn into a meaningless skewness.
        foreach (double value in new[] { 0.1, 10000000.1, -1.0 / 3 })
        {
            Summary s = Summarize(feed, Enumerable.Repeat(value, n).ToArray());

            Assert.Equal(value, s.Mean);
            Assert.Equal(0.0, s.Variance);
            Assert.Equal(0.0, s.StandardDeviation);
            Assert.Equal(0.0, s.Range);
            Assert.Null(s.Skewness);
            Assert.Null(s.Kurtosis);
        }
    }

    [Fact]
    public void Merged_parts_of_equal_values_have_zero_variance_and_no_shape()
    {
        var left = new SeriesSketch(seed: 1);
        var right = new SeriesSketch(seed: 2);
        left.Add(Enumerable.Repeat(0.1, 1000).ToArray());
        right.Add(Enumerable.Repeat(0.1, 777).ToArray());
        right.Add(0.1);
        left.Merge(right);

        Summary s = left.Summarize();
        Assert.Equal(0.0, s.Variance);
        Assert.Null(s.Skewness);
        Assert.Null(s.Kurtosis);
    }

    private static Summary Summarize(Feed feed, params double[] values)
    {
        var sketch = new SeriesSketch(seed: 1);
        if (feed == Feed.Span)
        {
            sketch.Add(values);
        }
        else
        {
            foreach (double v in values)
            {
                sketch.Add(v);
            }
        }

        return sketch.Summarize(Everything);
    }
}
