using MathNet.Numerics.Distributions;
using SummaryService.Sketches.Modes;
using SummaryService.Sketches.Summaries;

namespace SummaryService.Sketches.Tests.Buckets;

/// <summary>
/// On continuous data the modes are the density peaks of the log buckets: a real hump is found,
/// sampling noise makes none, the most prominent comes first, and each reports where it lies and
/// the share of values in its hump. The mode of a lognormal(μ, σ) density is e^(μ − σ²) (NIST/SEMATECH
/// e-Handbook of Statistical Methods, section 1.3.6.6.9, lognormal distribution).
/// </summary>
public class DensityModeTests
{
    [Theory]
    [InlineData(1, 0.3)]
    [InlineData(2, 0.3)]
    [InlineData(3, 0.4)]
    [InlineData(4, 0.25)]
    [InlineData(5, 0.35)]
    public void A_seventy_thirty_mixture_of_lognormals_near_6_and_60_shows_both_humps_in_order(int seed, double sigma)
    {
        var rng = new Random(seed);
        double[] values = Enumerable.Range(0, 30_000)
            .Select(_ => rng.NextDouble() < 0.7 ? LogNormal.Sample(rng, Math.Log(6), sigma) : LogNormal.Sample(rng, Math.Log(60), sigma))
            .ToArray();

        IReadOnlyList<ModeEstimate> modes = Summarize(values).Modes;

        Assert.Equal(2, modes.Count);
        Assert.All(modes, m => Assert.Equal(ModeKind.Region, m.Kind));
        AssertHump(modes[0], Math.Exp(Math.Log(6) - (sigma * sigma)), share: 0.7);
        AssertHump(modes[1], Math.Exp(Math.Log(60) - (sigma * sigma)), share: 0.3);
    }

    [Theory]
    [InlineData("lognormal", 11)]
    [InlineData("lognormal", 12)]
    [InlineData("normal", 13)]
    [InlineData("uniform", 14)]
    [InlineData("exponential", 15)]
    [InlineData("small lognormal", 16)]
    public void One_hump_gives_one_mode_whatever_the_sampling_noise(string shape, int seed)
    {
        var rng = new Random(seed);
        double[] values = shape switch
        {
            "lognormal" => Enumerable.Range(0, 50_000).Select(_ => LogNormal.Sample(rng, Math.Log(40), 0.5)).ToArray(),
            "normal" => Enumerable.Range(0, 50_000).Select(_ => Normal.Sample(rng, 100, 10)).ToArray(),
            "uniform" => Enumerable.Range(0, 50_000).Select(_ => ContinuousUniform.Sample(rng, 100, 200)).ToArray(),
            "exponential" => Enumerable.Range(0, 50_000).Select(_ => Exponential.Sample(rng, 0.1)).ToArray(),
            _ => Enumerable.Range(0, 400).Select(_ => LogNormal.Sample(rng, Math.Log(40), 0.5)).ToArray(),
        };

        ModeEstimate mode = Assert.Single(Summarize(values).Modes);

        Assert.Equal(ModeKind.Region, mode.Kind);
        Assert.Equal(1.0, mode.Share, 12);
        if (shape == "lognormal")
        {
            AssertHump(mode, Math.Exp(Math.Log(40) - 0.25), share: 1);
        }
    }

    [Fact]
    public void Zeros_outnumbering_every_bucket_lead_as_an_exact_value()
    {
        var rng = new Random(21);
        double[] values = Enumerable.Range(0, 20_000).Select(_ => rng.NextDouble() < 0.2 ? 0.0 : LogNormal.Sample(rng, 3, 0.5)).ToArray();

        IReadOnlyList<ModeEstimate> modes = Summarize(values).Modes;

        Assert.Equal((0.0, ModeKind.ExactValue), (modes[0].Value, modes[0].Kind));
        Assert.Equal(values.Count(v => v == 0), modes[0].Count);
        Assert.Equal(ModeKind.Region, modes[1].Kind);
    }

    [Fact]
    public void Discrete_data_keeps_exact_counts_with_every_tie()
    {
        // Status codes: few distinct integers; two tied at the top (counted by hand: 40 each).
        double[] values = [.. Enumerable.Repeat(200.0, 40), .. Enumerable.Repeat(404.0, 40), .. Enumerable.Repeat(500.0, 25)];
        var sketch = new SeriesSketch(seed: 1);
        sketch.Add(values.Concat(Enumerable.Range(0, 300).Select(i => 1000.0 + i)).ToArray());

        IReadOnlyList<ModeEstimate> modes = sketch.Summarize().Modes;

        Assert.Equal([(200.0, 40L), (404.0, 40L)], modes.Select(m => (m.Value, m.Count)));
        Assert.All(modes, m => Assert.Equal(ModeKind.ExactValue, m.Kind));
    }

    [Fact]
    public void Merging_exact_value_modes_with_continuous_data_gives_the_region_form()
    {
        var discrete = new SeriesSketch(seed: 1);
        discrete.Add(Enumerable.Range(0, 5000).Select(i => (double)(i % 7)).ToArray());
        var rng = new Random(22);
        var continuous = new SeriesSketch(seed: 2);
        continuous.Add(Enumerable.Range(0, 5000).Select(_ => LogNormal.Sample(rng, 5, 0.3)).ToArray());
        Assert.Equal(ModeKind.ExactValue, discrete.Summarize().Modes[0].Kind);

        discrete.Merge(continuous);

        Assert.True(discrete.Modes.IsContinuous);
        Assert.All(discrete.Summarize().Modes, m => Assert.Equal(ModeKind.Region, m.Kind));
    }

    [Fact]
    public void An_aged_bucket_of_discrete_data_past_its_exact_counts_gives_regions_too()
    {
        var sketch = new SeriesSketch(seed: 1);
        sketch.Add(Enumerable.Range(0, 20_000).Select(i => (double)(i % 1000)).ToArray());
        Assert.False(sketch.Modes.IsExact);
        Assert.False(sketch.Modes.IsContinuous);

        sketch.Compact();

        Assert.True(sketch.Modes.IsContinuous);
        Assert.All(sketch.Summarize().Modes, m => Assert.Equal(ModeKind.Region, m.Kind));
    }

    private static Summary Summarize(double[] values)
    {
        var sketch = new SeriesSketch(seed: 3);
        sketch.Add(values);
        return sketch.Summarize();
    }

    // The density's true mode lies in the reported location interval, and the hump's share is
    // within sampling error (a few points) of the component weight.
    private static void AssertHump(ModeEstimate mode, double trueMode, double share)
    {
        Assert.True(mode.Low <= trueMode && trueMode <= mode.High, $"true mode {trueMode} outside [{mode.Low}, {mode.High}]");
        Assert.InRange(mode.Value, mode.Low, mode.High);
        Assert.InRange(mode.Share, share - 0.03, share + 0.03);
    }
}
