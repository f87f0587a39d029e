namespace SummaryService.Sketches.Tests;

/// <summary>The finiteness guard finds the first NaN or infinity wherever it sits, and passes every finite value.</summary>
public class FiniteValuesTests
{
    private static readonly double[] NonFinite = [double.NaN, double.PositiveInfinity, double.NegativeInfinity, BitConverter.Int64BitsToDouble(unchecked((long)0xFFF8_0000_0000_0001))];

    [Fact]
    public void Finite_extremes_pass()
    {
        double[] values = [double.MaxValue, -double.MaxValue, double.Epsilon, -double.Epsilon, 0.0, -0.0, 1e-310, 1.0];
        Assert.Equal(-1, FiniteValues.IndexOfNonFinite(values));
    }

    [Fact]
    public void The_first_non_finite_value_is_found_at_every_position_and_length()
    {
        // Reference: double.IsFinite (IEEE 754: an all-ones exponent is NaN or infinity).
        var rng = new Random(75);
        for (int n = 1; n <= 140; n++)
        {
            for (int at = 0; at < n; at++)
            {
                double[] values = Enumerable.Range(0, n).Select(_ => (rng.NextDouble() - 0.5) * 1e300).ToArray();
                values[at] = NonFinite[rng.Next(NonFinite.Length)];
                if (at + 1 < n && rng.Next(2) == 0)
                {
                    values[rng.Next(at + 1, n)] = double.NaN;
                }

                Assert.Equal(Array.FindIndex(values, v => !double.IsFinite(v)), FiniteValues.IndexOfNonFinite(values));
            }
        }
    }
}
