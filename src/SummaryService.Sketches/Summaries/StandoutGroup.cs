namespace SummaryService.Sketches.Summaries;

/// <summary>One group of a split, as the caller hands it in: its key, its merged sketch and how many series it merged.</summary>
/// <param name="Value">The split label's value.</param>
/// <param name="Sketch">The group's merged sketch; not changed.</param>
/// <param name="Series">Series merged into it.</param>
public sealed record StandoutInput(string Value, SeriesSketch Sketch, int Series);

/// <summary>
/// The same groups in an earlier window, for ranking by how much each moved. Groups are matched by
/// value; a value missing on one side counts as an empty group there.
/// </summary>
/// <param name="Groups">The groups in the earlier window.</param>
/// <param name="Shared">Values of the earlier window in every rest and no group (series without the split label).</param>
/// <param name="SharedSeries">Series merged into <paramref name="Shared"/>.</param>
public sealed record StandoutBaseline(IReadOnlyList<StandoutInput> Groups, SeriesSketch? Shared, int SharedSeries);

/// <summary>Where a group stands after the split.</summary>
public enum StandoutStanding
{
    /// <summary>The measure could be judged: the group is in the ranking.</summary>
    Ranked = 0,

    /// <summary>The group or its rest holds too few values to bound the measure at the confidence.</summary>
    TooSmall = 1,

    /// <summary>Ranking by a ratio, and the quantile is not positive on both sides, so no ratio is defined.</summary>
    NoRatio = 2,
}

/// <summary>One quantile of a group against its rest.</summary>
/// <param name="Shift">Compare's shift with a = the rest, b = the group: each with the interval holding its population quantile, and the verdict.</param>
/// <param name="Bounded">Both sides hold enough values to bound this quantile (<see cref="SketchComparison.CanBound"/>); without it the verdict is never significant.</param>
public readonly record struct StandoutQuantile(QuantileShift Shift, bool Bounded)
{
    /// <summary>
    /// group / rest, when both quantile intervals are positive (the rest's entirely above 0, the
    /// group's not below it); otherwise null.
    /// </summary>
    public double? Ratio => HasRatio ? Shift.B.Value / Shift.A.Value : null;

    /// <summary>Smallest ratio consistent with both intervals: group low / rest high.</summary>
    public double? RatioLow => HasRatio ? Shift.B.Low / Shift.A.High : null;

    /// <summary>Largest ratio consistent with both intervals: group high / rest low.</summary>
    public double? RatioHigh => HasRatio ? Shift.B.High / Shift.A.Low : null;

    private bool HasRatio => Shift.A.Low > 0 && Shift.B.Low >= 0;
}

/// <summary>The Kolmogorov–Smirnov distance of a group to its rest, with its bounds and verdict.</summary>
/// <param name="Distance">Estimated sup |F_group − F_rest| between the two samples.</param>
/// <param name="Low">Lower bound of the sample distance at the confidence (certain where log buckets gave it).</param>
/// <param name="High">Upper bound.</param>
/// <param name="Limit">The distance two samples of one distribution stay within at the confidence (<see cref="SketchComparison.SameDistributionLimit"/>).</param>
public readonly record struct DistanceVerdict(double Distance, double Low, double High, double Limit)
{
    /// <summary>True when even the lower bound exceeds what two samples of one distribution would show.</summary>
    public bool Significant => Low > Limit;
}

/// <summary>
/// One group of a split against the merge of all the others. A false verdict of any one kind
/// (a quantile's shift, the distance) on a group drawn from the same distribution as its rest has
/// probability at most 2(1 − confidence): it needs one of two statements that each hold at the
/// confidence to fail.
/// </summary>
/// <param name="Value">The split label's value.</param>
/// <param name="Count">Values in the group.</param>
/// <param name="Series">Series merged into the group.</param>
/// <param name="RestCount">Values in the rest.</param>
/// <param name="RestSeries">Series merged into the rest.</param>
/// <param name="Quantiles">Each compared quantile against the rest, in the order asked; empty when a side holds no values.</param>
/// <param name="Distance">Kolmogorov–Smirnov distance to the rest; null when a side holds no values.</param>
/// <param name="Mean">Welch's interval for group mean − rest mean; null when a side has fewer than two values.</param>
/// <param name="Standing">Ranked, or why not.</param>
/// <param name="Strength">The measure's size the ranking sorts by (distance, |shift| or |ln ratio|); 0 unless ranked.</param>
/// <param name="Significant">The measure's own verdict holds: the distance verdict, or the ranked quantile's shift verdict (with an earlier window: the move's verdict).</param>
/// <param name="Move">With an earlier window, how the group and its rest moved between the two; the ranking then follows it.</param>
public sealed record StandoutGroup(
    string Value,
    long Count,
    int Series,
    long RestCount,
    int RestSeries,
    IReadOnlyList<StandoutQuantile> Quantiles,
    DistanceVerdict? Distance,
    MeanDifference? Mean,
    StandoutStanding Standing,
    double Strength,
    bool Significant,
    StandoutMove? Move = null);

/// <summary>A split's answer.</summary>
/// <param name="Ranked">Groups whose measure could be judged, strongest first (ties by value).</param>
/// <param name="Unranked">Groups too small to say anything, or without a ratio, by value.</param>
public sealed record StandoutRanking(IReadOnlyList<StandoutGroup> Ranked, IReadOnlyList<StandoutGroup> Unranked);
