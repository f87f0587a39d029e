using SummaryService.Formats.V1;
using SummaryService.Sketches.Modes;
using SummaryService.Sketches.Moments;
using SummaryService.Sketches.Quantiles;
using SummaryService.Sketches.Serialization;

namespace SummaryService.Sketches.Tests.SerializationTests;

/// <summary>
/// Each part's codec on its own: ToState → FromState → ToState gives an equal message (protobuf
/// message equality compares doubles bit for bit), the rebuilt part answers the same, and both go
/// on identically.
/// </summary>
public class ComponentCodecTests
{
    public static TheoryData<int> Sizes => new() { 0, 1, 3, 4, 10, 1000, 50_000 };

    [Theory]
    [MemberData(nameof(Sizes))]
    public void Moment_state_round_trips_and_continues_identically(int n)
    {
        var original = new MomentSketch();
        original.Add(SketchCases.Uniform(n, seed: n));
        MomentState state = SketchCodec.ToState(original);

        MomentSketch restored = SketchCodec.FromState(state);

        Assert.Equal(state, SketchCodec.ToState(restored));
        Assert.Equal(original.Count, restored.Count);
        Assert.Equal(original.Mean, restored.Mean);
        Assert.Equal(original.Min, restored.Min);
        Assert.Equal(original.Max, restored.Max);
        Assert.Equal(original.Sum, restored.Sum);
        Assert.Equal(original.M2, restored.M2);
        Assert.Equal(original.M3, restored.M3);
        Assert.Equal(original.M4, restored.M4);

        double[] more = SketchCases.Uniform(777, seed: 1);
        original.Add(more);
        restored.Add(more);
        original.Add(3.5);
        restored.Add(3.5);
        Assert.Equal(SketchCodec.ToState(original), SketchCodec.ToState(restored));
    }

    [Theory]
    [InlineData(0, 200)]
    [InlineData(1, 200)]
    [InlineData(200, 200)]
    [InlineData(100_000, 200)]
    [InlineData(20_000, 8)]
    public void Kll_state_round_trips_and_continues_identically(int n, int k)
    {
        var original = new KllSketch(k, seed: 31);
        original.Add(SketchCases.Uniform(n, seed: 2));
        KllState state = SketchCodec.ToState(original);

        KllSketch restored = SketchCodec.FromState(state);

        Assert.Equal(state, SketchCodec.ToState(restored));
        Assert.Equal(original.IsExact, restored.IsExact);
        Assert.Equal(original.RankErrorVarianceSum, restored.RankErrorVarianceSum);
        AssertSameView(original.CreateView(), restored.CreateView());

        // Further values compact again, which draws on the saved random state.
        double[] more = SketchCases.Uniform(10_000, seed: 3);
        original.Add(more);
        restored.Add(more);
        Assert.False(original.IsExact);
        Assert.Equal(SketchCodec.ToState(original), SketchCodec.ToState(restored));
        AssertSameView(original.CreateView(), restored.CreateView());
    }

    [Theory]
    [InlineData(0, 10, 0.0, true)]
    [InlineData(500, 20, 0.0, true)]
    [InlineData(5000, 2000, 0.0, false)]
    [InlineData(5000, 60, 0.25, true)]
    [InlineData(5000, 3000, 0.001, false)]
    public void Mode_state_round_trips_and_continues_identically(int n, int distinct, double resolution, bool exactPhase)
    {
        var original = new ModeSketch(resolution);
        original.Add(SketchCases.Integers(n, distinct, seed: 4).Select(v => v * 0.125).ToArray());
        Assert.Equal(exactPhase, original.IsExact);
        ModeState state = SketchCodec.ToState(original);

        ModeSketch restored = SketchCodec.FromState(state);

        Assert.Equal(state, SketchCodec.ToState(restored));
        Assert.Equal(original.IsExact, restored.IsExact);
        Assert.Equal(original.Count, restored.Count);
        Assert.Equal(original.Modes(10), restored.Modes(10));
        Assert.Equal(original.ModeCandidateCount(), restored.ModeCandidateCount());

        double[] more = SketchCases.Integers(3000, distinct, seed: 5).Select(v => v * 0.125).ToArray();
        original.Add(more);
        restored.Add(more);
        Assert.Equal(SketchCodec.ToState(original), SketchCodec.ToState(restored));
        Assert.Equal(original.Modes(10), restored.Modes(10));
    }

    [Fact]
    public void Exact_mode_state_does_not_depend_on_the_order_values_arrived_in()
    {
        // The exact counter is a hash table whose layout follows insertion order; the state lists
        // keys ascending, so equal multisets give equal bytes.
        double[] values = SketchCases.Integers(2000, 100, seed: 6);
        var forward = new ModeSketch();
        var backward = new ModeSketch();
        forward.Add(values);
        backward.Add(values.Reverse().ToArray());

        Assert.True(forward.IsExact);
        Assert.Equal(SketchCodec.ToState(forward), SketchCodec.ToState(backward));
    }

    private static void AssertSameView(KllSortedView expected, KllSortedView actual)
    {
        Assert.Equal(expected.Count, actual.Count);
        Assert.Equal(expected.Min, actual.Min);
        Assert.Equal(expected.Max, actual.Max);
        Assert.Equal(expected.Values.ToArray(), actual.Values.ToArray());
        Assert.Equal(expected.CumulativeWeights.ToArray(), actual.CumulativeWeights.ToArray());
    }
}
