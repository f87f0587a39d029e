using SummaryService.Sketches.Buckets;

namespace SummaryService.Sketches.Tests.Buckets;

/// <summary>
/// The base of a local maximum is its key col in the sense of topographic prominence (common
/// practice): on each side the lowest point before higher ground or the end, the higher of the
/// two. The fast reading must give the very point a walk outward from the maximum gives, ties
/// included, on curves with plateaus, long falling tails and repeated values.
/// </summary>
public class PeakBasesTests
{
    [Theory]
    [InlineData(1)]
    [InlineData(2)]
    [InlineData(3)]
    [InlineData(4)]
    public void Every_local_maximum_gets_the_base_a_walk_outward_finds(int seed)
    {
        var rng = new Random(seed);
        foreach (int length in new[] { 1, 2, 3, 7, 40, 300 })
        {
            // Few distinct levels so that ties and plateaus are common; some curves fall away in a tail.
            double[] curve = Enumerable.Range(0, length)
                .Select(i => seed % 2 == 0 ? rng.Next(6) : rng.Next(6) * Math.Exp(-i / 30.0))
                .ToArray();
            var bases = new PeakBases(curve, new double[length], new double[length], new int[length], new int[length]);
            for (int k = 0; k < length; k++)
            {
                bool rises = k == 0 || curve[k] > curve[k - 1];
                bool falls = k == length - 1 || curve[k] >= curve[k + 1];
                if (rises && falls)
                {
                    Assert.Equal(WalkOutward(curve, k), bases.BaseOf(k));
                }
            }
        }
    }

    [Fact]
    public void A_small_bump_on_a_falling_tail_rests_on_the_lowest_point_after_it()
    {
        double[] curve = [1, 9, 7, 5, 6, 4, 3, 0.5, 2, 1];
        var bases = new PeakBases(curve, new double[10], new double[10], new int[10], new int[10]);

        // Left of the bump at 4 the ground rises to 9 after dipping to 5; to the right it never
        // rises above 6 and falls to 0.5: the base is the higher of 5 and 0.5.
        Assert.Equal(3, bases.BaseOf(4));

        // The summit has no higher ground anywhere: its sides end at 1 (left) and fall to 0.5
        // (right), and the base is the higher of those.
        Assert.Equal(0, bases.BaseOf(1));
    }

    // The definition, walked point by point.
    private static int WalkOutward(double[] curve, int k)
    {
        int left = k;
        for (int i = k - 1; i >= 0 && curve[i] <= curve[k]; i--)
        {
            left = curve[i] < curve[left] ? i : left;
        }

        int right = k;
        for (int i = k + 1; i < curve.Length && curve[i] <= curve[k]; i++)
        {
            right = curve[i] < curve[right] ? i : right;
        }

        return curve[left] >= curve[right] ? left : right;
    }
}
