using MathNet.Numerics.Distributions;
using SummaryService.Sketches.Summaries;

namespace SummaryService.Sketches.Tests.MomentsTests;

/// <summary>
/// The interval for the mean is the Student-t interval mean ± t(1 − α/2, n − 1) · s/√n
/// (NIST/SEMATECH e-Handbook 7.2.2.1, confidence limits for the mean — section number from memory).
/// </summary>
public class MeanIntervalTests
{
    [Theory]
    [InlineData(2, 0.95)]
    [InlineData(10, 0.90)]
    [InlineData(10, 0.95)]
    [InlineData(10, 0.99)]
    [InlineData(30, 0.95)]
    [InlineData(1000, 0.99)]
    public void Half_width_is_the_t_quantile_times_the_standard_error(int n, double confidence)
    {
        Summary s = Summarize(n, confidence);
        double t = StudentT.InvCDF(0, 1, n - 1, 1 - ((1 - confidence) / 2)); // MathNet.Numerics reference quantile
        double standardError = s.StandardDeviation!.Value / Math.Sqrt(n);

        Tolerance.Close(standardError, s.StandardError, 1e-14, "standard error");
        Tolerance.Close(t * standardError, s.MeanHigh - s.Mean, 1e-12, "upper half-width");
        Tolerance.Close(t * standardError, s.Mean - s.MeanLow, 1e-12, "lower half-width");
    }

    [Theory]
    [InlineData(10, 0.95, 2.262157)] // t(0.975, 9), common t-table (from memory)
    [InlineData(10, 0.99, 3.249836)] // t(0.995, 9), common t-table (from memory)
    [InlineData(10, 0.90, 1.833113)] // t(0.95, 9), common t-table (from memory)
    [InlineData(2, 0.95, 12.706205)] // t(0.975, 1), common t-table (from memory)
    [InlineData(30, 0.95, 2.045230)] // t(0.975, 29), common t-table (from memory)
    public void Half_width_uses_the_tabulated_t_critical_value(int n, double confidence, double tabulated)
    {
        Summary s = Summarize(n, confidence);
        double impliedT = (s.MeanHigh!.Value - s.MeanLow!.Value) / 2 / s.StandardError!.Value;

        // The table gives six decimals, so it is good to ±5e-7 plus the interval's own rounding.
        Assert.InRange(impliedT, tabulated - 1e-6, tabulated + 1e-6);
    }

    [Theory]
    [InlineData(3)]
    [InlineData(50)]
    [InlineData(5000)]
    public void Interval_is_centred_on_the_mean(int n)
    {
        Summary s = Summarize(n, 0.99);
        double above = s.MeanHigh!.Value - s.Mean!.Value;
        double below = s.Mean.Value - s.MeanLow!.Value;

        // Mean ± h rounds each end once; the two half-widths differ by at most a few ulps of the mean.
        double ulp = Math.BitIncrement(Math.Abs(s.Mean.Value)) - Math.Abs(s.Mean.Value);
        Assert.True(above > 0);
        Assert.True(Math.Abs(above - below) <= 4 * ulp, $"half-widths {above:R} and {below:R} differ");
    }

    [Fact]
    public void Default_confidence_is_99_percent()
    {
        var sketch = new SeriesSketch(seed: 1);
        sketch.Add(Values(10));
        Summary byDefault = sketch.Summarize();

        Assert.Equal(0.99, byDefault.Confidence);
        Assert.Equal(Summarize(10, 0.99).MeanLow, byDefault.MeanLow);
        Assert.Equal(Summarize(10, 0.99).MeanHigh, byDefault.MeanHigh);
    }

    [Fact]
    public void Interval_covers_the_true_mean_at_its_stated_rate()
    {
        // 4000 seeded samples of 10 normal values: a 95% interval misses μ in about 5% of them.
        // Binomial sd of the miss rate is √(0.05·0.95/4000) ≈ 0.0034; ±0.015 is over 4 sd (common practice).
        var rng = new Random(99);
        int misses = 0;
        const int Trials = 4000;
        var options = new SummaryOptions { Confidence = 0.95, Quantiles = [] };
        for (int trial = 0; trial < Trials; trial++)
        {
            var sketch = new SeriesSketch(seed: 1);
            for (int i = 0; i < 10; i++)
            {
                sketch.Add(Normal.Sample(rng, 3.0, 1.5));
            }

            Summary s = sketch.Summarize(options);
            if (s.MeanLow > 3.0 || s.MeanHigh < 3.0)
            {
                misses++;
            }
        }

        Assert.InRange(misses / (double)Trials, 0.035, 0.065);
    }

    private static Summary Summarize(int n, double confidence)
    {
        var sketch = new SeriesSketch(seed: 1);
        sketch.Add(Values(n));
        return sketch.Summarize(new SummaryOptions { Confidence = confidence });
    }

    private static double[] Values(int n)
    {
        var rng = new Random(n);
        return Enumerable.Range(0, n).Select(_ => 50 + (10 * rng.NextDouble())).ToArray();
    }
}
