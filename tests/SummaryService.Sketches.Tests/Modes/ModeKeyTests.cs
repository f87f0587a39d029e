using SummaryService.Sketches.Modes;

namespace SummaryService.Sketches.Tests.Modes;

/// <summary>A span is keyed exactly as its values are one by one, −0 and +0 alike.</summary>
public class ModeKeyTests
{
    [Theory]
    [InlineData(0.0)]
    [InlineData(0.5)]
    [InlineData(1e-3)]
    public void Span_keys_equal_single_value_keys(double resolution)
    {
        var rng = new Random(83);
        for (int n = 0; n <= 21; n++)
        {
            double[] values = Enumerable.Range(0, n).Select(i => (i % 4) switch { 0 => -0.0, 1 => 0.0, 2 => -rng.NextDouble(), _ => rng.NextDouble() * 1e6 }).ToArray();
            var keys = new long[n];
            ModeKey.Of(values, resolution, keys);
            Assert.Equal(values.Select(v => ModeKey.Of(v, resolution)), keys);
        }

        var zeros = new long[2];
        ModeKey.Of([-0.0, 0.0], resolution, zeros);
        Assert.Equal([0L, 0L], zeros);
    }
}
