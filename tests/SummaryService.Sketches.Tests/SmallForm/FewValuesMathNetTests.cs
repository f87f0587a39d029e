using MathNet.Numerics.Statistics;
using SummaryService.Sketches.Summaries;
using SummaryService.Sketches.Tests.MomentsTests;

namespace SummaryService.Sketches.Tests.SmallForm;

/// <summary>
/// A small sketch's figures on a few values are the exact sample figures: moments as MathNet.Numerics
/// 5.0 computes them (definitions in <see cref="MathNetAgreementTests"/>), quantiles by Hyndman &amp;
/// Fan definition 7 (MathNet's QuantileDefinition.R7), and modes as exact counts.
/// </summary>
public class FewValuesMathNetTests
{
    private static readonly double[] Probabilities = [0, 0.1, 0.25, 0.5, 0.75, 0.9, 1];

    public static TheoryData<double[]> Sets => new()
    {
        { [12.5, 3.25, 40.0, 7.75] },
        { [-2.0, 5.0, 5.0, 11.5, -7.25] },
        { [0.001, 1000.0, 0.5, 0.5, 0.5, 3.0, 2.0, 8.0, 13.0, 21.0] },
        { SmallFormCases.Values(SeriesSketch.SmallValueLimit, offset: 40) },
    };

    [Theory]
    [MemberData(nameof(Sets))]
    public void Figures_equal_MathNet_on_few_values(double[] values)
    {
        var sketch = new SeriesSketch(seed: 21);
        sketch.Add(values.AsSpan(0, 2));
        foreach (double v in values.AsSpan(2))
        {
            sketch.Add(v);
        }

        Summary s = sketch.Summarize(new SummaryOptions { Quantiles = Probabilities, MaxModes = 3 });

        Assert.True(sketch.IsSmall);
        Assert.True(s.Exact);
        Assert.Equal(values.Length, s.Count);

        // Reference: MathNet.Numerics Statistics (Mean, Variance with n − 1, Skewness G1, Kurtosis G2).
        Tolerance.Close(Statistics.Mean(values), s.Mean, 1e-12, "mean vs MathNet");
        Tolerance.Close(Statistics.Variance(values), s.Variance, 1e-12, "variance vs MathNet");
        Tolerance.Close(Statistics.Skewness(values), s.Skewness, 1e-12, "skewness vs MathNet");
        if (values.Length >= 4)
        {
            Tolerance.Close(Statistics.Kurtosis(values), s.Kurtosis, 1e-12, "kurtosis vs MathNet");
        }

        Assert.Equal(Statistics.Minimum(values), s.Min);
        Assert.Equal(Statistics.Maximum(values), s.Max);

        // Reference: MathNet SortedArrayStatistics.QuantileCustom(..., QuantileDefinition.R7), bit for bit.
        double[] sorted = (double[])values.Clone();
        Array.Sort(sorted);
        foreach (var estimate in s.Quantiles)
        {
            double expected = SortedArrayStatistics.QuantileCustom(sorted, estimate.Q, QuantileDefinition.R7);
            Assert.Equal(expected, estimate.Value);
            Assert.Equal(expected, estimate.Low);
            Assert.Equal(expected, estimate.High);
        }

        // Modes: the most frequent value by direct counting (common practice), exact counts.
        var counts = values.GroupBy(v => v).ToDictionary(g => g.Key, g => (long)g.Count());
        long top = counts.Values.Max();
        Assert.All(s.Modes, m => Assert.Equal(top, m.Count));
        Assert.Equal(counts.Count(c => c.Value == top), s.Modes.Count + s.ModesOmitted);
    }
}
