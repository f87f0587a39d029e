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
        double confidence = options.Confidence;
        Sides window = Sides.Of(now, shared, sharedSeries);
        Sides? earlier = then is null ? null : Sides.Of(then, before!.Shared, before.SharedSeries);

        // The earlier window's rests first, so that each group's four sides are prepared once
        // (a sorted view each) and read by both its judgement and its move.
        SeriesSketch?[]? restsBefore = earlier is null ? null : new SeriesSketch?[then!.Length];
        if (earlier is not null)
        {
            RestMerges.ForEach(then!.Select(g => g.Sketch).ToArray(), earlier.Keys, before!.Shared, (i, rest) => restsBefore![i] = rest);
        }

        RestMerges.ForEach(now.Select(g => g.Sketch).ToArray(), window.Keys, shared, (i, rest) =>
        {
            var groupSide = new ComparisonSide(now[i].Sketch, confidence);
            var restSide = new ComparisonSide(rest, confidence);
            judged[i] = Judge(now[i], groupSide, restSide, window.RestSeries(i), options);
            if (earlier is not null)
            {
                var groupBefore = new ComparisonSide(then![i].Sketch, confidence);
                var restBefore = new ComparisonSide(restsBefore![i]!, confidence);
                restsBefore[i] = null; // no longer needed: memory falls as the walk goes on
                StandoutMove move = Moves.Of(then[i].Series, groupBefore, restBefore, earlier.RestSeries(i), groupSide, restSide, options.Quantiles);
                var (standing, strength, significant) = Moves.Measure(move, options);
                judged[i] = judged[i] with { Move = move, Standing = standing, Strength = strength, Significant = significant };
            }
        });

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

    private static StandoutGroup Judge(StandoutInput group, ComparisonSide own, ComparisonSide rest, int restSeries, StandoutOptions options)
    {
        SeriesSketch sketch = group.Sketch;
        double confidence = options.Confidence;
        if (sketch.Count == 0 || rest.Count == 0)
        {
            return new StandoutGroup(group.Value, sketch.Count, group.Series, rest.Count, restSeries, [], null, null, StandoutStanding.TooSmall, 0, false);
        }

        QuantileShift[] shifts = SketchComparison.Shifts(rest, own, options.Quantiles);
        var quantiles = new StandoutQuantile[shifts.Length];
        for (int q = 0; q < shifts.Length; q++)
        {
            quantiles[q] = new StandoutQuantile(shifts[q], Bounded(shifts[q].Q, confidence, sketch.Count, rest.Count));
        }

        DistanceVerdict verdict = Distance(rest, own);
        MeanDifference? mean = MeanDifference.Welch(rest.Sketch.Moments, sketch.Moments, confidence);
        var (standing, strength, significant) = Measure(quantiles, verdict, options);
        return new StandoutGroup(group.Value, sketch.Count, group.Series, rest.Count, restSeries, quantiles, verdict, mean, standing, strength, significant);
    }

    /// <summary>True when every side holds enough values to bound quantile q (<see cref="SketchComparison.CanBound"/>).</summary>
    internal static bool Bounded(double q, double confidence, params ReadOnlySpan<long> counts)
    {
        foreach (long count in counts)
        {
            if (!SketchComparison.CanBound(count, q, confidence))
            {
                return false;
            }
        }

        return true;
    }

    /// <summary>The distance from a to b (both holding values) with its bounds and the limit two samples of one distribution stay within.</summary>
    internal static DistanceVerdict Distance(ComparisonSide a, ComparisonSide b)
    {
        var (distance, low, high) = SketchComparison.KolmogorovSmirnov(a, b);
        return new DistanceVerdict(distance, low, high, SketchComparison.SameDistributionLimit(a.Count, b.Count, a.ConfidenceLevel));
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
