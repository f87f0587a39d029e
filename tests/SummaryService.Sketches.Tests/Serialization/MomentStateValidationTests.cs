using SummaryService.Formats.V1;
using SummaryService.Sketches.Serialization;

namespace SummaryService.Sketches.Tests.SerializationTests;

/// <summary>
/// Moment states a sketch could not be in are refused with <see cref="SketchFormatException"/>
/// naming the field: non-finite figures, negative sums of even powers, inverted extremes, spread
/// without values.
/// </summary>
public class MomentStateValidationTests
{
    public static TheoryData<string, double> NonFiniteFields()
    {
        var data = new TheoryData<string, double>();
        foreach (string field in new[] { "min", "max", "mean", "sum", "sum_compensation", "m2", "m3", "m4" })
        {
            foreach (double bad in new[] { double.NaN, double.PositiveInfinity, double.NegativeInfinity })
            {
                data.Add(field, bad);
            }
        }

        return data;
    }

    [Theory]
    [MemberData(nameof(NonFiniteFields))]
    public void Non_finite_figure_is_rejected_naming_the_field(string field, double bad)
    {
        SeriesSketchState state = BaseStates.ExactModes();
        Set(state.Moments, field, bad);

        var ex = BaseStates.Rejection(state);

        Assert.Contains($"moments.{field} is", ex.Message);
        Assert.Contains("finite", ex.Message);
    }

    [Theory]
    [InlineData("m2-negative", "moments.m2")]
    [InlineData("m4-negative", "moments.m4")]
    [InlineData("min-above-max", "moments.min")]
    [InlineData("count-zero-with-figures", "moments.count is 0")]
    [InlineData("one-value-with-spread", "moments.m2")]
    [InlineData("count-beyond-a-long", "moments.count")]
    public void Impossible_moment_state_is_rejected_naming_the_field(string spoil, string field)
    {
        SeriesSketchState state = BaseStates.ExactModes();
        MomentState m = state.Moments;
        switch (spoil)
        {
            case "m2-negative":
                m.M2 = -1e-3;
                break;
            case "m4-negative":
                m.M4 = -1;
                break;
            case "min-above-max":
                (m.Min, m.Max) = (m.Max, m.Min);
                break;
            case "count-zero-with-figures":
                m.Count = 0;
                break;
            case "one-value-with-spread":
                m.Count = 1;
                break;
            default:
                m.Count = ulong.MaxValue;
                break;
        }

        var ex = BaseStates.Rejection(state);

        Assert.Contains(field, ex.Message);
    }

    [Fact]
    public void Component_reader_applies_the_same_checks()
    {
        MomentState state = BaseStates.ExactModes().Moments;
        state.Mean = double.NaN;

        var ex = Assert.Throws<SketchFormatException>(() => SketchCodec.FromState(state));

        Assert.Contains("moments.mean", ex.Message);
    }

    private static void Set(MomentState m, string field, double value)
    {
        switch (field)
        {
            case "min":
                m.Min = value;
                break;
            case "max":
                m.Max = value;
                break;
            case "mean":
                m.Mean = value;
                break;
            case "sum":
                m.Sum = value;
                break;
            case "sum_compensation":
                m.SumCompensation = value;
                break;
            case "m2":
                m.M2 = value;
                break;
            case "m3":
                m.M3 = value;
                break;
            default:
                m.M4 = value;
                break;
        }
    }
}
