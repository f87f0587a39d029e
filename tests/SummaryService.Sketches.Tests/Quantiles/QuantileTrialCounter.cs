using SummaryService.Sketches.Quantiles;
using SummaryService.Sketches.Summaries;
using SummaryService.Sketches.Tests.Support;

namespace SummaryService.Sketches.Tests.Quantiles;

/// <summary>
/// Scores one sketch's answers against the exact answers: a miss is a value interval that leaves
/// out the true definition-7 quantile, or an estimate whose true rank is further from q than the
/// reported rank error.
/// </summary>
internal sealed class QuantileTrialCounter(ExactReference reference, double[] probabilities, double confidence)
{
    private readonly int[] _intervalMisses = new int[probabilities.Length];
    private readonly int[] _rankMisses = new int[probabilities.Length];

    public int Trials { get; private set; }

    public double LargestRankError { get; private set; }

    public void Score(KllSketch sketch)
    {
        Trials++;
        var bounds = new RankBounds(sketch, confidence);
        LargestRankError = Math.Max(LargestRankError, bounds.Epsilon);
        double n = reference.Count;
        for (int i = 0; i < probabilities.Length; i++)
        {
            double q = probabilities[i];
            QuantileEstimate estimate = bounds.Estimate(q);
            double truth = reference.Quantile(q);
            if (!(estimate.Low <= truth && truth <= estimate.High))
            {
                _intervalMisses[i]++;
            }

            // The estimate's true rank is an interval when it sits in a run of ties; two values of slack
            // cover the interpolation between neighbouring order statistics.
            double slack = (estimate.RankError * n) + 2;
            double target = q * n;
            if (reference.CountAtOrBelow(estimate.Value) < target - slack || reference.CountBelow(estimate.Value) > target + slack)
            {
                _rankMisses[i]++;
            }
        }
    }

    /// <summary>Asserts that no probability missed in more than the share of trials the confidence allows.</summary>
    public void AssertWithinConfidence(string label)
    {
        // Binomial allowance: with failure probability at most 1 − confidence per trial, more than
        // this many misses in this many trials has probability below 1e-3 (common practice: a
        // one-sided test at the 0.1% level so the suite itself does not flake).
        int allowed = AllowedMisses(Trials, 1 - confidence);
        for (int i = 0; i < probabilities.Length; i++)
        {
            Assert.True(_intervalMisses[i] <= allowed, $"{label}: q = {probabilities[i]} interval missed the true quantile in {_intervalMisses[i]} of {Trials} trials (allowed {allowed}).");
            Assert.True(_rankMisses[i] <= allowed, $"{label}: q = {probabilities[i]} estimate's true rank was off by more than the rank error in {_rankMisses[i]} of {Trials} trials (allowed {allowed}).");
        }
    }

    internal static int AllowedMisses(int trials, double failure)
    {
        var binomial = new MathNet.Numerics.Distributions.Binomial(failure, trials);
        int allowed = 0;
        while (1 - binomial.CumulativeDistribution(allowed) > 1e-3)
        {
            allowed++;
        }

        return allowed;
    }
}
