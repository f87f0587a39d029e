using SummaryService.Formats.V1;
using SummaryService.Sketches.Serialization;

namespace SummaryService.Sketches.Tests.SerializationTests;

/// <summary>
/// The log-bucket part is untrusted input like the others: a scale or limit out of range, a count
/// of zero, sparse gaps that do not fit, a span over the limit, an index no finite value maps to,
/// or buckets that disagree with the moments are refused, naming the field.
/// </summary>
public class LogBucketStateValidationTests
{
    [Theory]
    [InlineData("scale", "log_buckets.scale is 9")]
    [InlineData("max_buckets", "log_buckets.max_buckets is 4")]
    [InlineData("zero count", "log_buckets.positive.counts[1] is 0")]
    [InlineData("gaps length", "log_buckets.positive.gaps has 10 entries for 9 counts")]
    [InlineData("first gap", "log_buckets.positive.gaps[0] is 3")]
    [InlineData("span", "log_buckets.positive spans")]
    [InlineData("index", "outside")]
    [InlineData("total", "counts disagree")]
    [InlineData("extremes", "do not hold moments.min")]
    [InlineData("flag", "no_log_buckets is set but log_buckets is present")]
    public void A_bad_log_bucket_part_is_refused_naming_the_field(string spoil, string message)
    {
        SeriesSketchState state = BaseStates.ExactModes();
        LogBucketState buckets = state.LogBuckets;
        LogBucketRange positive = buckets.Positive;
        switch (spoil)
        {
            case "scale":
                buckets.Scale = 9;
                break;
            case "max_buckets":
                buckets.MaxBuckets = 4;
                break;
            case "zero count":
                positive.Counts[1] = 0;
                break;
            case "gaps length":
                positive.Gaps.Add(0);
                break;
            case "first gap":
                positive.Gaps.Clear();
                positive.Gaps.AddRange(Enumerable.Repeat(3u, positive.Counts.Count));
                break;
            case "span":
                positive.Gaps.Clear();
                positive.Gaps.Add(0);
                positive.Gaps.AddRange(Enumerable.Repeat(1000u, positive.Counts.Count - 1));
                break;
            case "index":
                positive.Offset = int.MaxValue - 2;
                break;
            case "total":
                positive.Counts[0]++;
                break;
            case "extremes":
                positive.Offset -= 1;
                break;
            default:
                state.NoLogBuckets = true;
                break;
        }

        var ex = BaseStates.Rejection(state);

        Assert.Contains(message, ex.Message);
    }

    [Fact]
    public void A_sparse_range_reads_back_as_the_same_buckets()
    {
        // Values far apart: the occupied buckets are not consecutive, so gaps are written.
        var sketch = new SeriesSketch(seed: 1);
        sketch.Add(Enumerable.Range(0, 500).Select(i => Math.Pow(1.5, i % 40)).ToArray());
        SeriesSketchState state = SketchCodec.ToState(sketch);
        Assert.NotEmpty(state.LogBuckets.Positive.Gaps);

        Assert.Equal(state, SketchCodec.ToState(SketchCodec.FromState(state)));
    }
}
