using SummaryService.Sketches.Summaries;

namespace SummaryService.Sketches.Tests.MomentsTests;

/// <summary>
/// NIST StRD univariate summary statistics, lower-difficulty NumAcc1 and higher-difficulty
/// NumAcc2–NumAcc4: a constant offset up to 1e7 on a spread of 0.1, where the textbook
/// Σx² − n·mean² loses every digit. Data and certified values are recalled from memory:
/// NumAcc1 = 10000001, 10000003, 10000002 (mean 10000002, sd 1); NumAcc2/3/4 = 1001 values,
/// c followed by c − 0.1 and c + 0.1 alternating 500 times each, for c = 1.2, 1000000.2 and
/// 10000000.2 (mean c, sd 0.1).
/// </summary>
/// <remarks>
/// NIST grades results by the log relative error (LRE, significant digits agreed). The data are
/// decimal; as doubles, 10000000.1 and its neighbours carry representation errors of up to
/// 9.3e-10 that do not cancel, so the standard deviation of NumAcc4 as stored is
/// 0.1000000005588 (computed exactly below) and no double-based method can agree with the
/// certified 0.1 beyond 8.25 digits. Each figure is therefore checked twice: against the exact
/// statistics of the stored doubles to 9 digits, and against the certified value to as many
/// digits as the representation leaves (9, and 8 for the NumAcc4 standard deviation).
/// </remarks>
public class NistNumericalAccuracyTests
{
    public enum Feed
    {
        Span,
        OneAtATime,
        MergedHalves,
    }

    public static TheoryData<string, Feed> Cases()
    {
        var data = new TheoryData<string, Feed>();
        foreach (string name in new[] { "NumAcc1", "NumAcc2", "NumAcc3", "NumAcc4" })
        {
            foreach (Feed feed in Enum.GetValues<Feed>())
            {
                data.Add(name, feed);
            }
        }

        return data;
    }

    [Theory]
    [MemberData(nameof(Cases))]
    public void Mean_keeps_nine_significant_digits(string dataset, Feed feed)
    {
        var (values, certifiedMean, _) = Dataset(dataset);
        Summary s = Summarize(values, feed);

        Tolerance.SignificantDigits(certifiedMean, s.Mean, 9, $"{dataset} mean vs certified");
        Tolerance.SignificantDigits(ExactStatistics.Mean(values), s.Mean, 9, $"{dataset} mean vs exact");
    }

    [Theory]
    [MemberData(nameof(Cases))]
    public void Standard_deviation_keeps_nine_significant_digits(string dataset, Feed feed)
    {
        var (values, _, certifiedSd) = Dataset(dataset);
        Summary s = Summarize(values, feed);

        double exactSd = Math.Sqrt(ExactStatistics.Variance(values));
        Tolerance.SignificantDigits(exactSd, s.StandardDeviation, 9, $"{dataset} sd vs exact");
        Tolerance.SignificantDigits(ExactStatistics.Variance(values), s.Variance, 9, $"{dataset} variance vs exact");
        double representable = dataset == "NumAcc4" ? 8 : 9;
        Tolerance.SignificantDigits(certifiedSd, s.StandardDeviation, representable, $"{dataset} sd vs certified");
    }

    [Fact]
    public void NumAcc4_as_doubles_cannot_reach_nine_digits_of_the_certified_sd()
    {
        // Guards the relaxation above: if this ever fails the data are wrong, not the sketch.
        var (values, _, certifiedSd) = Dataset("NumAcc4");
        double exactSd = Math.Sqrt(ExactStatistics.Variance(values));
        double lre = -Math.Log10(Math.Abs(exactSd - certifiedSd) / certifiedSd);
        Assert.InRange(lre, 8.0, 8.5);
    }

    private static Summary Summarize(double[] values, Feed feed)
    {
        switch (feed)
        {
            case Feed.Span:
                {
                    var sketch = new SeriesSketch(seed: 1);
                    sketch.Add(values);
                    return sketch.Summarize();
                }

            case Feed.OneAtATime:
                {
                    var sketch = new SeriesSketch(seed: 1);
                    foreach (double v in values)
                    {
                        sketch.Add(v);
                    }

                    return sketch.Summarize();
                }

            default:
                {
                    int half = values.Length / 2;
                    var left = new SeriesSketch(seed: 1);
                    var right = new SeriesSketch(seed: 2);
                    left.Add(values.AsSpan(0, half));
                    right.Add(values.AsSpan(half));
                    left.Merge(right);
                    return left.Summarize();
                }
        }
    }

    // From memory of the NIST StRD univariate data sets; see the class comment.
    private static (double[] Values, double CertifiedMean, double CertifiedSd) Dataset(string name)
    {
        if (name == "NumAcc1")
        {
            return ([10000001, 10000003, 10000002], 10000002, 1);
        }

        (double centre, double below, double above) = name switch
        {
            "NumAcc2" => (1.2, 1.1, 1.3),
            "NumAcc3" => (1000000.2, 1000000.1, 1000000.3),
            "NumAcc4" => (10000000.2, 10000000.1, 10000000.3),
            _ => throw new ArgumentOutOfRangeException(nameof(name)),
        };
        var values = new double[1001];
        values[0] = centre;
        for (int i = 1; i < values.Length; i++)
        {
            values[i] = i % 2 == 1 ? below : above;
        }

        return (values, centre, 0.1);
    }
}
