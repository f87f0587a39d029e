namespace SummaryService.Sketches.Tests.SmallForm;

/// <summary>
/// <see cref="SeriesSketch.EstimatedBytes"/> feeds the store's memory budget, so it must track the
/// heap bytes a sketch really holds. A clone allocates exactly the live structure of a sketch (every
/// buffer trimmed to its content), so the bytes allocated while cloning, as the runtime counts them
/// (GC.GetAllocatedBytesForCurrentThread), are the reference for the clone's own estimate. Checked
/// as bounds, not timings.
/// </summary>
public class EstimatedBytesMeasurementTests
{
    public static TheoryData<int, string> Sizes => new()
    {
        { 0, "default" },
        { 1, "default" },
        { 4, "default" },
        { 32, "default" },
        { 33, "default" },
        { 300, "default" },
        { 100_000, "default" },
        { 100_000, "res" },
    };

    [Theory]
    [MemberData(nameof(Sizes))]
    public void Estimate_is_within_a_tenth_of_the_bytes_a_clone_allocates(int count, string options)
    {
        SeriesSketch sketch = SmallFormCases.Build(count, "span", options, seed: 3);
        _ = sketch.Clone(); // first call pays for JIT and type loading, which allocate too

        long before = GC.GetAllocatedBytesForCurrentThread();
        SeriesSketch copy = sketch.Clone();
        long measured = GC.GetAllocatedBytesForCurrentThread() - before;

        long estimate = copy.EstimatedBytes;
        Assert.InRange(estimate, measured * 0.9, (measured * 1.1) + 16);
        GC.KeepAlive(copy);
    }

    [Fact]
    public void A_small_sketch_fed_one_span_allocates_what_it_estimates()
    {
        double[] values = SmallFormCases.Values(4, offset: 0);
        _ = SmallFormCases.Feed(new SeriesSketch(seed: 1), values, "span");

        long before = GC.GetAllocatedBytesForCurrentThread();
        var sketch = new SeriesSketch(seed: 1);
        sketch.Add(values);
        long measured = GC.GetAllocatedBytesForCurrentThread() - before;

        // Nothing is discarded on the way, so the bytes allocated are the bytes held; the runtime's
        // count of them (object headers, padding) is its own business, so it is a bound, as above.
        Assert.True(sketch.IsSmall);
        Assert.InRange(sketch.EstimatedBytes, measured * 0.9, (measured * 1.1) + 16);
    }

    [Fact]
    public void A_four_value_sketch_takes_under_a_third_of_the_full_form()
    {
        SeriesSketch small = SmallFormCases.Build(4, "span", "default", seed: 2);
        SeriesSketch full = SmallFormCases.BuildFull(4, "span", "default", seed: 2);

        Assert.True(small.EstimatedBytes * 3 < full.EstimatedBytes, $"{small.EstimatedBytes} B small vs {full.EstimatedBytes} B full");
    }
}
