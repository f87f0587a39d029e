using SummaryService.Sketches.Quantiles;
using SummaryService.Sketches.Tests.Support;

namespace SummaryService.Sketches.Tests.Quantiles;

public class KllErrorForecastTests
{
    [Theory]
    [InlineData(200, 1)]
    [InlineData(200, 200)]
    [InlineData(200, 201)]
    [InlineData(200, 12_345)]
    [InlineData(200, 1_000_000)]
    [InlineData(64, 333_333)]
    [InlineData(1000, 2_000_000)]
    public void Forecast_equals_what_a_sketch_fed_that_many_values_reports(int k, int n)
    {
        var sketch = new KllSketch(k, seed: 7);
        sketch.Add(TestData.Uniform(n, seed: n));
        Assert.Equal(sketch.RankError(0.99), KllErrorForecast.RankError(k, n, 0.99), 15);
    }

    // Over ten seconds on the project's two-core machine: filter with --filter "Duration!=Long" on a laptop; CI runs it.
    [Fact]
    [Trait("Duration", "Long")]
    public void Default_k_stays_under_two_percent_from_a_thousand_to_a_billion_values()
    {
        // Issue target for k = 200: at most 2% at 99% confidence (checked here over the whole range
        // a bucket or a merged window can plausibly hold).
        for (long n = 1000; n <= 1_000_000_000; n *= 10)
        {
            double epsilon = KllErrorForecast.RankError(KllSketch.DefaultK, n, 0.99);
            Assert.True(epsilon <= 0.02, $"n = {n}: ε = {epsilon:P3}");
        }
    }
}
