namespace SummaryService.Sketches.Summaries;

/// <summary>
/// Compares every group of a split (one label's values) with the merge of all the others and ranks
/// the groups by how far they depart: per group its quantiles against the rest with Compare's
/// intervals and verdicts (<see cref="SketchComparison"/>), the Kolmogorov–Smirnov distance with its
/// bounds and verdict, and Welch's interval for the difference of means. The rests come from prefix
/// and suffix merges (<see cref="RestMerges"/>), so a thousand groups cost a few thousand merges.
/// </summary>
public static class SplitComparison
{
    /// <summary>
    /// Ranks <paramref name="groups"/>. <paramref name="shared"/> holds values that belong to no group
    /// but to every rest (series without the split label); <paramref name="sharedSeries"/> counts its series.
    /// </summary>
    public static StandoutRanking Rank(IReadOnlyList<StandoutInput> groups, SeriesSketch? shared, int sharedSeries, StandoutOptions options)
    {
        ArgumentNullException.ThrowIfNull(groups);
        ArgumentNullException.ThrowIfNull(options);
        options.Validate();
        int allSeries = sharedSeries + groups.Sum(g => g.Series);
        var judged = new StandoutGroup[groups.Count];
        RestMerges.ForEach(
            groups.Select(g => g.Sketch).ToArray(),
            groups.Select(g => RestMerges.KeyOf(g.Value)).ToArray(),
            shared,
            (i, rest) => judged[i] = Judge(groups[i], rest, allSeries - groups[i].Series, options));
        StandoutGroup[] ranked = [.. judged.Where(g => g.Standing == StandoutStanding.Ranked)
            .OrderByDescending(g => g.Strength)
            .ThenBy(g => g.Value, StringComparer.Ordinal)];
        StandoutGroup[] unranked = [.. judged.Where(g => g.Standing != StandoutStanding.Ranked)];
        return new StandoutRanking(ranked, unranked);
    }

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
            bool bounded = SketchComparison.CanBound(sketch.Count, shifts[q].Q, confidence) && SketchComparison.CanBound(rest.Count, shifts[q].Q, confidence);
            quantiles[q] = new StandoutQuantile(shifts[q], bounded);
        }

        var (distance, low, high) = SketchComparison.KolmogorovSmirnov(rest, sketch, confidence);
        var verdict = new DistanceVerdict(distance, low, high, SketchComparison.SameDistributionLimit(sketch.Count, rest.Count, confidence));
        MeanDifference? mean = MeanDifference.Welch(rest.Moments, sketch.Moments, confidence);
        var (standing, strength, significant) = Measure(quantiles, verdict, options);
        return new StandoutGroup(group.Value, sketch.Count, group.Series, rest.Count, restSeries, quantiles, verdict, mean, standing, strength, significant);
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
}
