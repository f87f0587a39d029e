using MathNet.Numerics.Distributions;
using MathNet.Numerics.Statistics;
using SummaryService.Sketches.Summaries;
using SummaryService.Sketches.Tests.Support;

namespace SummaryService.Sketches.Tests.Splits;

/// <summary>
/// Every figure of a split against brute force on the raw values of each side: each group and the
/// concatenation of all the others (plus the values every rest shares), summarized by MathNet.Numerics.
/// </summary>
public class BruteForceTests
{
    private const double Confidence = 0.99;

    // Sizes on both sides of the small form (200 values) and of KLL compaction, shapes of their own.
    private static readonly (string Value, double[] Values)[] Groups =
    [
        ("east", TestData.LogNormal(30_000, seed: 21, mu: 4, sigma: 0.6)),
        ("north", TestData.LogNormal(12_000, seed: 22, mu: 4.1, sigma: 0.5)),
        ("south", TestData.Normal(150, seed: 23, mean: 60, sd: 9)),
        ("west", TestData.Bimodal(8000, seed: 24)),
        ("yard", TestData.LogNormal(2500, seed: 25, mu: 4, sigma: 0.9)),
    ];

    private static readonly double[] Unlabelled = TestData.LogNormal(5000, seed: 26, mu: 4, sigma: 0.6);

    [Fact]
    public void Counts_are_exact_and_each_sides_sample_quantiles_lie_in_their_intervals()
    {
        StandoutRanking answer = Rank(new StandoutOptions { Quantiles = [0.25, 0.5, 0.9, 0.99], Confidence = Confidence });

        Assert.Equal(Groups.Length, answer.Ranked.Count + answer.Unranked.Count);
        foreach (StandoutGroup group in answer.Ranked.Concat(answer.Unranked))
        {
            var (own, rest) = Sides(group.Value);
            Assert.Equal(own.Length, group.Count);
            Assert.Equal(rest.Length, group.RestCount);
            Assert.Equal(1, group.Series);
            Assert.Equal(Groups.Length, group.RestSeries); // the other four and the unlabelled series
            var ownSorted = own.Order().ToArray();
            var restSorted = rest.Order().ToArray();
            foreach (StandoutQuantile q in group.Quantiles)
            {
                // The intervals hold the population quantile; the sample quantile (Hyndman & Fan
                // definition 7, MathNet R7) lies well inside them.
                double groupQuantile = SortedArrayStatistics.QuantileCustom(ownSorted, q.Shift.Q, QuantileDefinition.R7);
                double restQuantile = SortedArrayStatistics.QuantileCustom(restSorted, q.Shift.Q, QuantileDefinition.R7);
                Assert.InRange(groupQuantile, q.Shift.B.Low, q.Shift.B.High);
                Assert.InRange(restQuantile, q.Shift.A.Low, q.Shift.A.High);
                Assert.Equal(q.Shift.B.Value - q.Shift.A.Value, q.Shift.Delta);
            }
        }
    }

    [Fact]
    public void The_distance_bounds_hold_the_exact_two_sample_statistic()
    {
        StandoutRanking answer = Rank(new StandoutOptions { Confidence = Confidence });

        foreach (StandoutGroup group in answer.Ranked)
        {
            var (own, rest) = Sides(group.Value);
            var ro = new ExactReference(own);
            var rr = new ExactReference(rest);

            // sup over x of |F_group(x) − F_rest(x)|, the two-sample statistic by its definition (common practice).
            double exact = own.Concat(rest).Max(x => Math.Abs((ro.CountAtOrBelow(x) / (double)own.Length) - (rr.CountAtOrBelow(x) / (double)rest.Length)));
            DistanceVerdict d = group.Distance!.Value;
            Assert.InRange(exact, d.Low, d.High);

            // Massart's DKW constant: ε = sqrt(ln(2/α)/(2n)) per side at α = δ/2 (Massart 1990).
            double perSide(int n) => Math.Sqrt(Math.Log(2 / ((1 - Confidence) / 2)) / (2.0 * n));
            Assert.Equal(perSide(own.Length) + perSide(rest.Length), d.Limit, 12);
        }
    }

    [Fact]
    public void The_mean_difference_is_welchs_interval_on_the_raw_values()
    {
        StandoutRanking answer = Rank(new StandoutOptions { Confidence = Confidence });

        foreach (StandoutGroup group in answer.Ranked)
        {
            var (own, rest) = Sides(group.Value);

            // Welch (1947): se² = s₁²/n₁ + s₂²/n₂, Welch–Satterthwaite ν; MathNet.Numerics for the
            // sample variances and the Student t quantile.
            double v1 = own.Variance() / own.Length;
            double v2 = rest.Variance() / rest.Length;
            double nu = Math.Pow(v1 + v2, 2) / ((v1 * v1 / (own.Length - 1)) + (v2 * v2 / (rest.Length - 1)));
            double half = StudentT.InvCDF(0, 1, nu, 1 - ((1 - Confidence) / 2)) * Math.Sqrt(v1 + v2);
            double delta = own.Mean() - rest.Mean();
            MeanDifference mean = group.Mean!.Value;
            Assert.Equal(delta, mean.Delta, 1e-9 * Math.Abs(rest.Mean()));
            Assert.Equal(delta - half, mean.Low, 1e-9 * Math.Abs(rest.Mean()));
            Assert.Equal(delta + half, mean.High, 1e-9 * Math.Abs(rest.Mean()));
            Assert.Equal(nu, mean.DegreesOfFreedom, 1e-6 * nu);
        }
    }

    private static StandoutRanking Rank(StandoutOptions options)
    {
        StandoutInput[] inputs = [.. Groups.Select((g, i) => new StandoutInput(g.Value, Sketch(g.Values, (ulong)i + 1), 1))];
        return SplitComparison.Rank(inputs, Sketch(Unlabelled, 99), 1, options);
    }

    private static (double[] Own, double[] Others) Sides(string value) =>
        (Groups.Single(g => g.Value == value).Values, [.. Groups.Where(g => g.Value != value).SelectMany(g => g.Values), .. Unlabelled]);

    private static SeriesSketch Sketch(double[] values, ulong seed)
    {
        var sketch = new SeriesSketch(seed: seed);
        sketch.Add(values);
        return sketch;
    }
}
