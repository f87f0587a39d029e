using MathNet.Numerics.Statistics;
using SummaryService.Sketches.Moments;
using SummaryService.Sketches.Summaries;

namespace SummaryService.Sketches.Tests.MomentsTests;

/// <summary>
/// The summary's moment figures agree with MathNet.Numerics 5.0 and with an extended-precision
/// two-pass reference to 1e-12 on a million seeded values.
/// </summary>
/// <remarks>
/// Definitions, read from MathNet's source (RunningStatistics, which Statistics.Skewness and
/// Statistics.Kurtosis use): Variance and StandardDeviation divide by n − 1; Skewness is
/// n·√(n−1)·M3 / ((n−2)·M2^1.5), which is the adjusted Fisher–Pearson G1; Kurtosis is
/// (n²−1)/((n−2)(n−3)) · (n·M4/M2² − 3 + 6/(n+1)), which is the bias-corrected excess kurtosis G2.
/// These are the definitions the summary reports, so the figures must agree to rounding.
/// MathNet accumulates one value at a time in doubles; on these samples it stays within about
/// 1e-13 of the compensated reference (relative, or absolute for figures below 1; checked below
/// as well), so it can serve as a reference at 1e-12.
/// </remarks>
public class MathNetAgreementTests
{
    private const double Tight = 1e-12;

    public static TheoryData<Family> Families => new() { Family.Normal, Family.Exponential, Family.LogNormal, Family.Uniform };

    [Theory]
    [MemberData(nameof(Families))]
    public void Chunked_span_moments_match_MathNet_on_a_million_values(Family family)
    {
        double[] values = SeededSamples.Values(family);
        Summary s = SeededSamples.ChunkedSummary(family);

        Assert.Equal(values.Length, s.Count);
        Tolerance.Close(Statistics.Mean(values), s.Mean, Tight, "mean vs MathNet");
        Tolerance.Close(Statistics.Variance(values), s.Variance, Tight, "variance vs MathNet");
        Tolerance.Close(Statistics.StandardDeviation(values), s.StandardDeviation, Tight, "sd vs MathNet");
        Tolerance.Close(Statistics.Skewness(values), s.Skewness, Tight, "skewness vs MathNet");
        Tolerance.Close(Statistics.Kurtosis(values), s.Kurtosis, Tight, "kurtosis vs MathNet");
    }

    [Theory]
    [MemberData(nameof(Families))]
    public void Chunked_span_moments_match_a_compensated_two_pass_reference(Family family)
    {
        double[] values = SeededSamples.Values(family);
        Summary s = SeededSamples.ChunkedSummary(family);
        var reference = CompensatedMoments.Of(values);

        Tolerance.Close(reference.Mean, s.Mean, Tight, "mean");
        Tolerance.Close(reference.Variance, s.Variance, Tight, "variance");
        Tolerance.Close(Math.Sqrt(reference.Variance), s.StandardDeviation, Tight, "sd");
        Tolerance.Close(reference.Skewness, s.Skewness, Tight, "skewness");
        Tolerance.Close(reference.Kurtosis, s.Kurtosis, Tight, "kurtosis");

        // The reference justifies MathNet as a reference: it too lands within the tolerance.
        Tolerance.Close(reference.Mean, Statistics.Mean(values), Tight, "MathNet mean");
        Tolerance.Close(reference.Variance, Statistics.Variance(values), Tight, "MathNet variance");
        Tolerance.Close(reference.Skewness, Statistics.Skewness(values), Tight, "MathNet skewness");
        Tolerance.Close(reference.Kurtosis, Statistics.Kurtosis(values), Tight, "MathNet kurtosis");
    }

    [Theory]
    [MemberData(nameof(Families))]
    public void One_value_at_a_time_moments_match_MathNet(Family family)
    {
        // The per-value Welford/Terriberry path is slower, so it gets the first 100 000 values.
        ReadOnlySpan<double> values = SeededSamples.Values(family).AsSpan(0, 100_000);
        var sketch = new SeriesSketch(seed: 5);
        foreach (double v in values)
        {
            sketch.Add(v);
        }

        Summary s = sketch.Summarize();
        double[] copy = values.ToArray();
        Tolerance.Close(Statistics.Mean(copy), s.Mean, Tight, "mean");
        Tolerance.Close(Statistics.Variance(copy), s.Variance, Tight, "variance");
        Tolerance.Close(Statistics.StandardDeviation(copy), s.StandardDeviation, Tight, "sd");
        Tolerance.Close(Statistics.Skewness(copy), s.Skewness, Tight, "skewness");
        Tolerance.Close(Statistics.Kurtosis(copy), s.Kurtosis, Tight, "kurtosis");
    }

    [Fact]
    public void MomentSketch_fed_alone_holds_the_same_moments_as_inside_a_SeriesSketch()
    {
        // The series sketch forwards spans to its moment sketch unchanged: same bits, not just close.
        ReadOnlySpan<double> values = SeededSamples.Values(Family.LogNormal).AsSpan(0, 50_000);
        var alone = new MomentSketch();
        for (int start = 0; start < values.Length; start += SeededSamples.Chunk)
        {
            alone.Add(values.Slice(start, SeededSamples.Chunk));
        }

        MomentSketch inside = SeededSamples.FedInChunks(values).Moments;
        Assert.Equal(inside.Count, alone.Count);
        Assert.Equal(inside.Mean, alone.Mean);
        Assert.Equal(inside.M2, alone.M2);
        Assert.Equal(inside.M3, alone.M3);
        Assert.Equal(inside.M4, alone.M4);
        Assert.Equal(inside.Sum, alone.Sum);
    }

    [Theory]
    [InlineData(4)]
    [InlineData(5)]
    [InlineData(7)]
    [InlineData(12)]
    [InlineData(40)]
    public void Small_samples_apply_the_same_bias_corrections_as_MathNet(int n)
    {
        // At small n the corrections sqrt(n(n−1))/(n−2) and (n−1)/((n−2)(n−3)) are far from 1, so a
        // summary using g1/g2 or population variance instead would miss by percent, not by 1e-12.
        var rng = new Random(n);
        double[] values = Enumerable.Range(0, n).Select(_ => Math.Exp(rng.NextDouble() * 3)).ToArray();
        var sketch = new SeriesSketch(seed: 1);
        sketch.Add(values);
        Summary s = sketch.Summarize();

        Tolerance.Close(Statistics.Variance(values), s.Variance, Tight, "variance");
        Tolerance.Close(Statistics.PopulationVariance(values), s.PopulationVariance, Tight, "population variance");
        Tolerance.Close(Statistics.Skewness(values), s.Skewness, Tight, "skewness");
        Tolerance.Close(Statistics.Kurtosis(values), s.Kurtosis, Tight, "kurtosis");
    }
}
