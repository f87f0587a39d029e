using MathNet.Numerics.Distributions;
using SummaryService.Sketches.Summaries;
using SummaryService.Sketches.Tests.Quantiles;
using SummaryService.Sketches.Tests.Support;

namespace SummaryService.Sketches.Tests.Buckets;

/// <summary>
/// The full form's intervals — KLL at the confidence ∩ log buckets ∩ [min, max] — hold the exact
/// answer (MathNet R7 for quantiles and the MAD's two medians, counting for shares and bins) in at least the stated share of
/// independently seeded trials: the KLL part's failure probability is the only one left, and the
/// intersection must not lose coverage by cutting the KLL interval with the certain ones.
/// </summary>
[Trait("Duration", "Long")]
public class IntersectedCoverageTests
{
    private const int Trials = 120;
    private static readonly double[] Probabilities = [0.001, 0.01, 0.1, 0.25, 0.5, 0.75, 0.9, 0.99, 0.999];

    [Theory]
    [InlineData(0.99)]
    [InlineData(0.9)]
    public void Intervals_hold_the_truth_in_at_least_the_stated_share_of_seeded_trials(double confidence)
    {
        // Latency-like: lognormal bulk with a 2% slow cluster and some values at exactly 0.
        var rng = new Random(31);
        double[] values = Enumerable.Range(0, 60_000)
            .Select(_ => rng.NextDouble() < 0.02 ? LogNormal.Sample(rng, Math.Log(900), 0.2) : rng.NextDouble() < 0.01 ? 0.0 : LogNormal.Sample(rng, Math.Log(40), 0.5))
            .ToArray();
        var reference = new ExactReference(values);
        double[] thresholds = [0, 10, 40, 41, 100, 800, 1000];
        double[] edges = [0, 20, 40, 60, 120, 500, 1000, 5000];
        var quantileMisses = new int[Probabilities.Length];
        var shareMisses = new int[thresholds.Length];
        var binMisses = new int[edges.Length - 1];
        var options = new SummaryOptions { Quantiles = Probabilities, RankOf = thresholds, Histogram = HistogramSpec.WithEdges(edges), Confidence = confidence };
        int logHeld = 0;
        int madMisses = 0;
        double madTruth = reference.Mad();
        for (int trial = 0; trial < Trials; trial++)
        {
            var sketch = new SeriesSketch(seed: (ulong)trial + 1);
            for (int start = 0; start < values.Length; start += 500)
            {
                sketch.Add(values.AsSpan(start, 500));
            }

            Summary s = sketch.Summarize(options);
            Assert.Equal(SketchForm.Full, s.Form);
            for (int i = 0; i < Probabilities.Length; i++)
            {
                QuantileEstimate e = s.Quantiles[i];
                double truth = reference.Quantile(e.Q);
                quantileMisses[i] += e.Low <= truth && truth <= e.High ? 0 : 1;
                logHeld += e.LowSource == BoundSource.LogBuckets || e.HighSource == BoundSource.LogBuckets ? 1 : 0;
            }

            madMisses += s.MadLow <= madTruth && madTruth <= s.MadHigh ? 0 : 1;
            for (int i = 0; i < thresholds.Length; i++)
            {
                double truth = reference.CountAtOrBelow(thresholds[i]) / (double)values.Length;
                shareMisses[i] += s.Ranks[i].Low <= truth && truth <= s.Ranks[i].High ? 0 : 1;
            }

            for (int i = 0; i < binMisses.Length; i++)
            {
                bool last = i == binMisses.Length - 1;
                double truth = (last ? reference.CountAtOrBelow(edges[i + 1]) : reference.CountBelow(edges[i + 1])) - reference.CountBelow(edges[i]);
                binMisses[i] += s.Histogram![i].CountLow <= truth && truth <= s.Histogram[i].CountHigh ? 0 : 1;
            }
        }

        // Binomial allowance at the 0.1% level, as for the KLL part alone (QuantileTrialCounter).
        int allowed = QuantileTrialCounter.AllowedMisses(Trials, 1 - confidence);
        Assert.All(quantileMisses, m => Assert.True(m <= allowed, $"quantile intervals missed {m} of {Trials} (allowed {allowed})"));
        Assert.All(shareMisses, m => Assert.True(m <= allowed, $"share intervals missed {m} of {Trials} (allowed {allowed})"));
        Assert.True(madMisses <= allowed, $"MAD intervals missed {madMisses} of {Trials} (allowed {allowed})");
        Assert.All(binMisses, m => Assert.True(m <= allowed, $"bin count intervals missed {m} of {Trials} (allowed {allowed})"));

        // The log buckets did narrow the answers: most quantile intervals have an end from them.
        Assert.True(logHeld > Trials * Probabilities.Length / 2, $"log buckets gave an end in only {logHeld} quantile answers");
    }
}
