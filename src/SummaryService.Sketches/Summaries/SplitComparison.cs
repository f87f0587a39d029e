namespace SummaryService.Sketches.Summaries;

/// <summary>
/// Compares every group of a split (one label's values) with the merge of all the others and ranks
/// the groups by how far they depart: per group its quantiles against the rest with Compare's
/// intervals and verdicts (<see cref="SketchComparison"/>), the Kolmogorov–Smirnov distance with its
/// bounds and verdict, and Welch's interval for the difference of means. With an earlier window the
/// ranking follows how much each group moved against how much its rest moved. The rests come from
/// prefix and suffix merges (<see cref="RestMerges"/>), so a thousand groups cost a few thousand merges.
/// </summary>
public static class SplitComparison
{
    /// <summary>
    /// Ranks <paramref name="groups"/>. <paramref name="shared"/> holds values that belong to no group
    /// but to every rest (series without the split label); <paramref name="sharedSeries"/> counts its
    /// series. With <paramref name="before"/>, groups are ranked by their move from it.
    /// </summary>
    public static StandoutRanking Rank(IReadOnlyList<StandoutInput> groups, SeriesSketch? shared, int sharedSeries, StandoutOptions options, StandoutBaseline? before = null)
    {
        ArgumentNullException.ThrowIfNull(groups);
        ArgumentNullException.ThrowIfNull(options);
        options.Validate();
        var (now, then) = Align(groups, before);
        var judged = new StandoutGroup[now.Length];
        Sides window = Sides.Of(now, shared, sharedSeries);
        Sides? earlier = then is null ? null : Sides.Of(then, before!.Shared, before.SharedSeries);
        // The window's rests are kept only when the moves need them again.
        SeriesSketch[]? restsNow = earlier is null ? null : new SeriesSketch[now.Length];
        RestMerges.ForEach(now.Select(g => g.Sketch).ToArray(), window.Keys, shared, (i, rest) =>
        {
            judged[i] = Judge(now[i], rest, window.RestSeries(i), options);
            restsNow?[i] = rest;
        });
        if (earlier is not null)
        {
            var restsBefore = new SeriesSketch[then!.Length];
            RestMerges.ForEach(then.Select(g => g.Sketch).ToArray(), earlier.Keys, before!.Shared, (i, rest) => restsBefore[i] = rest);
            for (int i = 0; i < judged.Length; i++)
            {
                StandoutMove move = Moves.Of(then[i], restsBefore[i], earlier.RestSeries(i), now[i].Sketch, restsNow![i], options.Quantiles, options.Confidence);
                var (standing, strength, significant) = Moves.Measure(move, options);
                judged[i] = judged[i] with { Move = move, Standing = standing, Strength = strength, Significant = significant };
            }
        }

        StandoutGroup[] ranked = [.. judged.Where(g => g.Standing == StandoutStanding.Ranked)
            .OrderByDescending(g => g.Strength)
            .ThenBy(g => g.Value, StringComparer.Ordinal)];
        StandoutGroup[] unranked = [.. judged.Where(g => g.Standing != StandoutStanding.Ranked).OrderBy(g => g.Value, StringComparer.Ordinal)];
        return new StandoutRanking(ranked, unranked);
    }

    // The window's groups in their order, then values only the earlier window has; the earlier
    // window's groups matched to them by value, empty where it lacks one.
    private static (StandoutInput[] Now, StandoutInput[]? Then) Align(IReadOnlyList<StandoutInput> groups, StandoutBaseline? before)
    {
        if (before is null)
        {
            return ([.. groups], null);
        }

        ArgumentNullException.ThrowIfNull(before.Groups);
        SeriesSketchOptions sketchOptions = groups.Concat(before.Groups).Select(g => g.Sketch.Options).FirstOrDefault() ?? new SeriesSketchOptions();
        var earlier = before.Groups.ToDictionary(g => g.Value, StringComparer.Ordinal);
        var present = groups.Select(g => g.Value).ToHashSet(StringComparer.Ordinal);
        StandoutInput[] now = [.. groups, .. before.Groups.Where(g => !present.Contains(g.Value)).Select(g => Empty(g.Value, sketchOptions))];
        StandoutInput[] then = [.. now.Select(g => earlier.TryGetValue(g.Value, out StandoutInput? e) ? e : Empty(g.Value, sketchOptions))];
        return (now, then);
    }

    private static StandoutInput Empty(string value, SeriesSketchOptions options) => new(value, new SeriesSketch(options, RestMerges.KeyOf(value)), 0);

    private static StandoutGroup Judge(StandoutInput group, SeriesSketch rest, int restSeries, StandoutOptions options)
    {
        SeriesSketch sketch = group.Sketch;
        double confidence = options.Confidence;
        if (sketch.Count == 0 || rest.Count == 0)
        {
            return new StandoutGroup(group.Value, sketch.Count, group.Series, rest.Count, restSeries, [], null, null, StandoutStanding.TooSmall, 0, false);
        }

        QuantileShift[] shifts = SketchComparison.Shifts(rest, sketch, options.Quantiles, confidence);
        var quantiles = new StandoutQuantile[shifts.Length];
        for (int q = 0; q < shifts.Length; q++)
        {
            quantiles[q] = new StandoutQuantile(shifts[q], Bounded(shifts[q].Q, confidence, sketch, rest));
        }

        DistanceVerdict verdict = Distance(rest, sketch, confidence);
        MeanDifference? mean = MeanDifference.Welch(rest.Moments, sketch.Moments, confidence);
        var (standing, strength, significant) = Measure(quantiles, verdict, options);
        return new StandoutGroup(group.Value, sketch.Count, group.Series, rest.Count, restSeries, quantiles, verdict, mean, standing, strength, significant);
    }

    /// <summary>True when every sketch holds enough values to bound quantile q (<see cref="SketchComparison.CanBound"/>).</summary>
    internal static bool Bounded(double q, double confidence, params ReadOnlySpan<SeriesSketch> sides)
    {
        foreach (SeriesSketch side in sides)
        {
            if (!SketchComparison.CanBound(side.Count, q, confidence))
            {
                return false;
            }
        }

        return true;
    }

    /// <summary>The distance from a to b with its bounds and the limit two samples of one distribution stay within.</summary>
    internal static DistanceVerdict Distance(SeriesSketch a, SeriesSketch b, double confidence)
    {
        var (distance, low, high) = SketchComparison.KolmogorovSmirnov(a, b, confidence);
        return new DistanceVerdict(distance, low, high, SketchComparison.SameDistributionLimit(a.Count, b.Count, confidence));
    }

    private static (StandoutStanding Standing, double Strength, bool Significant) Measure(StandoutQuantile[] quantiles, DistanceVerdict distance, StandoutOptions options)
    {
        if (options.Measure == StandoutMeasure.Distance)
        {
            // A limit of 1 or more: no distance could ever show a difference.
            return distance.Limit >= 1 ? (StandoutStanding.TooSmall, 0, false) : (StandoutStanding.Ranked, distance.Distance, distance.Significant);
        }

        StandoutQuantile chosen = quantiles.First(q => q.Shift.Q == options.MeasureQuantile);
        if (!chosen.Bounded)
        {
            return (StandoutStanding.TooSmall, 0, false);
        }

        if (options.Measure == StandoutMeasure.QuantileShift)
        {
            return (StandoutStanding.Ranked, Math.Abs(chosen.Shift.Delta), chosen.Shift.Significant);
        }

        return chosen.Ratio is double ratio ? (StandoutStanding.Ranked, Math.Abs(Math.Log(ratio)), chosen.Shift.Significant) : (StandoutStanding.NoRatio, 0, false);
    }

    /// <summary>One window's groups: their keys (seeds of their rests) and how many series each rest merges.</summary>
    private sealed class Sides
    {
        private readonly int _allSeries;
        private readonly StandoutInput[] _groups;

        private Sides(StandoutInput[] groups, int allSeries)
        {
            _groups = groups;
            _allSeries = allSeries;
            Keys = [.. groups.Select(g => RestMerges.KeyOf(g.Value))];
        }

        public ulong[] Keys { get; }

        public static Sides Of(StandoutInput[] groups, SeriesSketch? shared, int sharedSeries) =>
            new(groups, (shared is null ? 0 : sharedSeries) + groups.Sum(g => g.Series));

        public int RestSeries(int i) => _allSeries - _groups[i].Series;
    }
}
