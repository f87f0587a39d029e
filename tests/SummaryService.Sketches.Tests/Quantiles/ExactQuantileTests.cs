using SummaryService.Sketches.Summaries;
using SummaryService.Sketches.Tests.Support;

namespace SummaryService.Sketches.Tests.Quantiles;

/// <summary>Up to k values nothing is compacted, so every quantile must be the exact sample quantile.</summary>
public class ExactQuantileTests
{
    private static readonly double[] Probabilities = [0, 0.01, 0.1, 0.25, 1.0 / 3, 0.5, 0.75, 0.9, 0.95, 0.99, 0.999, 1];

    public static TheoryData<string, double[]> SmallSets => new()
    {
        { "one value", [42.5] },
        { "two values", [3, -1] },
        { "three values", [5, 1, 3] },
        { "ties", [2, 2, 2, 7, 7, 1, 1, 1, 1, 9] },
        { "all equal", [4, 4, 4, 4, 4] },
        { "negative and zero", [-0.0, 0.0, -3.5, 2.25, -3.5, 10] },
        { "199 lognormal", TestData.LogNormal(199, seed: 11) },
        { "exactly k = 200 uniform", TestData.Uniform(200, seed: 12) },
        { "200 heavy ties", TestData.HeavyTies(200, seed: 13) },
    };

    [Theory]
    [MemberData(nameof(SmallSets))]
    public void Quantiles_equal_definition_7_bit_for_bit(string name, double[] values)
    {
        var sketch = new SeriesSketch(seed: 1);
        sketch.Add(values);
        var summary = sketch.Summarize(new SummaryOptions { Quantiles = Probabilities });
        var reference = new ExactReference(values);

        Assert.True(summary.Exact, name);
        Assert.Equal(0, summary.RankError);
        foreach (var estimate in summary.Quantiles)
        {
            // Reference: MathNet.Numerics SortedArrayStatistics.QuantileCustom(..., QuantileDefinition.R7),
            // Hyndman & Fan (1996) definition 7.
            double expected = reference.Quantile(estimate.Q);
            Assert.Equal(expected, estimate.Value);
            Assert.Equal(expected, estimate.Low);
            Assert.Equal(expected, estimate.High);
            Assert.Equal(0, estimate.RankError);
        }
    }

    [Theory]
    [MemberData(nameof(SmallSets))]
    public void Mad_is_exact_while_nothing_is_compacted(string name, double[] values)
    {
        var sketch = new SeriesSketch(seed: 2);
        sketch.Add(values);
        var summary = sketch.Summarize();

        // Reference: median of |x − median| with both medians by MathNet's definition 7.
        double expected = new ExactReference(values).Mad();
        Assert.Equal(expected, summary.Mad);
        Assert.Equal(expected, summary.MadLow);
        Assert.Equal(expected, summary.MadHigh);
        Assert.True(summary.Exact, name);
    }

    [Fact]
    public void Five_number_summary_iqr_and_quartile_skewness_follow_from_the_quartiles()
    {
        double[] values = [1, 2, 3, 4, 5, 6, 7, 8, 9, 100];
        var sketch = new SeriesSketch(seed: 3);
        sketch.Add(values);
        var summary = sketch.Summarize();
        var reference = new ExactReference(values);

        // Definition 7 on 1..9,100 (MathNet R7): Q1 = 3.25, median 5.5, Q3 = 7.75.
        double q1 = reference.Quantile(0.25);
        double q2 = reference.Quantile(0.5);
        double q3 = reference.Quantile(0.75);
        Assert.Equal(3.25, q1);
        Assert.Equal(5.5, q2);
        Assert.Equal(7.75, q3);
        Assert.Equal(1, summary.FiveNumber!.Value.Min);
        Assert.Equal(q1, summary.FiveNumber.Value.LowerQuartile.Value);
        Assert.Equal(q2, summary.FiveNumber.Value.Median.Value);
        Assert.Equal(q3, summary.FiveNumber.Value.UpperQuartile.Value);
        Assert.Equal(100, summary.FiveNumber.Value.Max);
        Assert.Equal(q3 - q1, summary.Iqr);

        // Bowley's quartile skewness (Q3 + Q1 − 2·Q2)/(Q3 − Q1): 0 for these evenly spaced quartiles
        // even though the mean is pulled far above the median by the outlier (common practice).
        Assert.Equal(0, summary.QuartileSkewness!.Value, 12);
        Assert.True(summary.Mean > q2);
    }

    [Fact]
    public void Quartile_skewness_is_absent_when_the_quartiles_coincide()
    {
        var sketch = new SeriesSketch(seed: 4);
        sketch.Add([5, 5, 5, 5, 5, 5, 1, 9]);
        var summary = sketch.Summarize();
        Assert.Equal(0, summary.Iqr);
        Assert.Null(summary.QuartileSkewness);
    }

    [Fact]
    public void Ranks_and_histogram_are_exact_counts_while_exact()
    {
        double[] values = [1, 2, 2, 3, 3, 3, 4, 4, 4, 4];
        var sketch = new SeriesSketch(seed: 5);
        sketch.Add(values);
        var summary = sketch.Summarize(new SummaryOptions
        {
            RankOf = [0, 2, 2.5, 4, 10],
            Histogram = HistogramSpec.WithEdges(1, 2, 3, 4),
        });

        // Counting by hand (common practice): share of values ≤ x.
        double[] expectedShares = [0, 0.3, 0.3, 1, 1];
        for (int i = 0; i < expectedShares.Length; i++)
        {
            Assert.Equal(expectedShares[i], summary.Ranks[i].Fraction, 15);
            Assert.Equal(expectedShares[i], summary.Ranks[i].Low, 15);
            Assert.Equal(expectedShares[i], summary.Ranks[i].High, 15);
        }

        // Bins [1,2), [2,3), [3,4] — the last bin holds its upper edge.
        double[] expectedCounts = [1, 2, 7];
        Assert.Equal(expectedCounts, summary.Histogram!.Select(b => b.Count));
        Assert.Equal(expectedCounts, summary.Histogram!.Select(b => b.CountLow));
        Assert.Equal(expectedCounts, summary.Histogram!.Select(b => b.CountHigh));
    }

    [Fact]
    public void An_empty_sketch_reports_no_quantiles_and_no_figures()
    {
        var summary = new SeriesSketch(seed: 6).Summarize();
        Assert.Equal(0, summary.Count);
        Assert.Empty(summary.Quantiles);
        Assert.Null(summary.Mean);
        Assert.Null(summary.Mad);
        Assert.Null(summary.Iqr);
        Assert.Null(summary.FiveNumber);
        Assert.Empty(summary.Modes);
        Assert.True(summary.Exact);
    }
}
