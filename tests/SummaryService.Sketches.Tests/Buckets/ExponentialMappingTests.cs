using SummaryService.Sketches.Buckets;

namespace SummaryService.Sketches.Tests.Buckets;

/// <summary>
/// The bucket index mapping against the OpenTelemetry metrics data model (specification/metrics/
/// data-model.md, section "ExponentialHistogram": "Exponential Scale", "Exponential Buckets" and
/// "Producer Expectations"), at scales −2 to 8.
/// </summary>
public class ExponentialMappingTests
{
    // 0x1p-1022 (IEEE 754 binary64, common practice).
    private static readonly double SmallestNormal = BitConverter.Int64BitsToDouble(1L << 52);

    public static TheoryData<int> Scales() => new() { -2, -1, 0, 1, 2, 3, 4, 5, 6, 7, 8 };

    [Fact]
    public void Base_at_each_scale_is_the_data_model_table()
    {
        // Data model, "Exponential Scale": base = 2**(2**(-scale)), table to five decimals.
        (int Scale, double Base)[] table =
        [
            (8, 1.00271), (7, 1.00543), (6, 1.01089), (5, 1.02190), (4, 1.04427), (3, 1.09051),
            (2, 1.18921), (1, 1.41421), (0, 2), (-1, 4), (-2, 16), (-3, 256), (-4, 65536),
        ];
        foreach ((int scale, double expected) in table)
        {
            Assert.Equal(expected, Math.Round(ExponentialMapping.ForScale(scale).Base, 5));
        }
    }

    [Fact]
    public void Lower_boundaries_at_scale_3_are_the_data_model_table()
    {
        // Data model, "Exponential Buckets": scale 3, indices 0–7, lower boundary to five decimals.
        double[] expected = [1, 1.09051, 1.18921, 1.29684, 1.41421, 1.54221, 1.68179, 1.83401];
        ExponentialMapping mapping = ExponentialMapping.ForScale(3);
        for (int index = 0; index < expected.Length; index++)
        {
            Assert.Equal(expected[index], Math.Round(mapping.Floor(index), 5));
        }
    }

    [Theory]
    [MemberData(nameof(Scales))]
    public void An_exact_power_of_two_is_the_upper_end_of_the_bucket_below(int scale)
    {
        // Data model, "Exponential Buckets": bucket index 0 counts (1, base]; powers of two sit on
        // a boundary, so 2^e belongs to the bucket whose upper end it is.
        ExponentialMapping mapping = ExponentialMapping.ForScale(scale);
        for (int e = -1074; e <= 1023; e++)
        {
            double value = Math.ScaleB(1, e);
            int expected = scale >= 0 ? (e << scale) - 1 : (e - 1) >> -scale;
            Assert.Equal(expected, mapping.IndexOf(value));
            if (e >= -1022)
            {
                // Both of the data model's pseudo-code forms are exact for powers of two.
                int reference = scale <= 0
                    ? OpenTelemetryReferenceMapping.MapToIndexNegativeScale(value, scale)
                    : OpenTelemetryReferenceMapping.MapToIndexLogarithm(value, scale);
                Assert.Equal(reference, mapping.IndexOf(value));
            }
        }
    }

    [Theory]
    [MemberData(nameof(Scales))]
    public void The_smallest_and_largest_normal_doubles_map_as_the_data_model_defines(int scale)
    {
        ExponentialMapping mapping = ExponentialMapping.ForScale(scale);
        int up = Math.Max(scale, 0);
        int down = Math.Max(-scale, 0);

        // 0x1p-1022, a power of two: the upper end of the bucket below 2^-1022.
        Assert.Equal(((-1022 << up) - 1) >> down, mapping.IndexOf(SmallestNormal));

        // The largest double lies just below 2^1024: the last bucket of the octave [2^1023, 2^1024).
        Assert.Equal(((1024 << up) - 1) >> down, mapping.IndexOf(double.MaxValue));
        Assert.True(OpenTelemetryReferenceMapping.InBucket(double.MaxValue, scale, mapping.IndexOf(double.MaxValue)));
        Assert.True(OpenTelemetryReferenceMapping.InBucket(SmallestNormal, scale, mapping.IndexOf(SmallestNormal)));

        // Subnormals, which the data model lets a producer round up, are mapped exactly here.
        Assert.True(OpenTelemetryReferenceMapping.InBucket(double.Epsilon, scale, mapping.IndexOf(double.Epsilon)));
        Assert.True(OpenTelemetryReferenceMapping.InBucket(BitConverter.Int64BitsToDouble((1L << 52) - 1), scale, mapping.IndexOf(BitConverter.Int64BitsToDouble((1L << 52) - 1))));
    }

    [Theory]
    [MemberData(nameof(Scales))]
    public void Every_value_lies_in_the_bucket_the_definition_gives(int scale)
    {
        ExponentialMapping mapping = ExponentialMapping.ForScale(scale);
        foreach (double value in Samples(seed: 100 + scale))
        {
            int index = mapping.IndexOf(value);

            // Data model, "Exponential Buckets": base^index < value <= base^(index+1), decided exactly.
            Assert.True(OpenTelemetryReferenceMapping.InBucket(value, scale, index), $"{value:R} at scale {scale} mapped to {index}");
        }
    }

    [Theory]
    [MemberData(nameof(Scales))]
    public void The_data_model_pseudo_code_gives_the_same_index(int scale)
    {
        ExponentialMapping mapping = ExponentialMapping.ForScale(scale);
        double scaleFactor = Math.ScaleB(1 / Math.Log(2), scale);
        foreach (double value in Samples(seed: 200 + scale))
        {
            if (scale <= 0)
            {
                // "Scale Zero" and "Negative Scale" are exact: they must agree everywhere.
                Assert.Equal(OpenTelemetryReferenceMapping.MapToIndexNegativeScale(value, scale), mapping.IndexOf(value));
                continue;
            }

            // "All Scales: Use the Logarithm Function" "is not guaranteed to be exactly correct near
            // powers of two"; away from a boundary (by more than rounding can move it) it must agree.
            double scaled = Math.Log(value) * scaleFactor;
            if (Math.Abs(scaled - Math.Round(scaled)) > 1e-9 * Math.Max(1, Math.Abs(scaled)))
            {
                Assert.Equal(OpenTelemetryReferenceMapping.MapToIndexLogarithm(value, scale), mapping.IndexOf(value));
            }
        }
    }

    [Theory]
    [MemberData(nameof(Scales))]
    public void Floor_boundaries_bracket_each_bucket_to_the_last_double(int scale)
    {
        // Bucket i holds exactly the doubles v with Floor(i) < v <= Floor(i + 1): the double just
        // above a floor maps to i, and the floor itself to a lower bucket.
        ExponentialMapping mapping = ExponentialMapping.ForScale(scale);
        foreach (double value in Samples(seed: 300 + scale))
        {
            int index = mapping.IndexOf(value);
            double low = mapping.Floor(index);
            double high = mapping.Floor((long)index + 1);
            Assert.True(low < value && value <= high, $"{value:R} outside ({low:R}, {high:R}] at scale {scale}");
            Assert.Equal(index, mapping.IndexOf(Math.BitIncrement(low) == 0 ? double.Epsilon : Math.BitIncrement(low)));
            Assert.Equal(index, mapping.IndexOf(high));
            if (low > 0)
            {
                Assert.True(mapping.IndexOf(low) < index);
            }
        }
    }

    // Magnitudes over the whole double range: random bit patterns (every exponent alike), lognormal
    // values over 12 decades, and neighbours of boundaries at the finest scale.
    private static IEnumerable<double> Samples(int seed)
    {
        var rng = new Random(seed);
        for (int i = 0; i < 400; i++)
        {
            long bits = rng.NextInt64(1, 0x7FF0_0000_0000_0000);
            yield return BitConverter.Int64BitsToDouble(bits);
        }

        for (int i = 0; i < 400; i++)
        {
            yield return Math.Pow(10, (rng.NextDouble() * 12) - 6);
        }

        ExponentialMapping finest = ExponentialMapping.ForScale(ExponentialMapping.MaxScale);
        for (int i = 0; i < 200; i++)
        {
            double boundary = finest.Floor(rng.Next(-2000, 2000));
            yield return boundary;
            yield return Math.BitIncrement(boundary);
            yield return Math.BitDecrement(boundary);
        }
    }
}
