namespace SummaryService.Sketches.Summaries;

/// <summary>
/// How one quantile moved between two windows in a group and in its rest, and by how much the
/// group's move exceeds the rest's. The excess interval is the widest difference the four
/// population intervals allow, so it holds the populations' excess whenever all four hold theirs.
/// </summary>
/// <param name="Group">The group's quantile, a = before, b = the window (Compare's shift and verdict).</param>
/// <param name="Rest">The rest's quantile, a = before, b = the window.</param>
/// <param name="Bounded">All four sides hold enough values to bound the quantile (<see cref="SketchComparison.CanBound"/>).</param>
public readonly record struct QuantileMove(QuantileShift Group, QuantileShift Rest, bool Bounded)
{
    /// <summary>The group's shift less the rest's.</summary>
    public double Excess => Group.Delta - Rest.Delta;

    /// <summary>Smallest excess consistent with the four intervals: group's lowest move less the rest's highest.</summary>
    public double ExcessLow => Group.Low - Rest.High;

    /// <summary>Largest excess consistent with the four intervals.</summary>
    public double ExcessHigh => Group.High - Rest.Low;

    /// <summary>Bounded, and the excess interval leaves out 0: the group moved otherwise than its rest.</summary>
    public bool Significant => Bounded && (ExcessLow > 0 || ExcessHigh < 0);

    /// <summary>ln(group after/before) − ln(rest after/before), when all four intervals are positive; else null.</summary>
    public double? LogRatioExcess => Positive ? Math.Log(Group.B.Value / Group.A.Value) - Math.Log(Rest.B.Value / Rest.A.Value) : null;

    /// <summary>Smallest log-ratio excess consistent with the intervals.</summary>
    public double? LogRatioExcessLow => Positive ? Math.Log(Group.B.Low / Group.A.High) - Math.Log(Rest.B.High / Rest.A.Low) : null;

    /// <summary>Largest log-ratio excess consistent with the intervals.</summary>
    public double? LogRatioExcessHigh => Positive ? Math.Log(Group.B.High / Group.A.Low) - Math.Log(Rest.B.Low / Rest.A.High) : null;

    /// <summary>Bounded, and the log-ratio excess interval leaves out 0.</summary>
    public bool RatioSignificant => Bounded && Positive && (LogRatioExcessLow > 0 || LogRatioExcessHigh < 0);

    private bool Positive => Group.A.Low > 0 && Group.B.Low > 0 && Rest.A.Low > 0 && Rest.B.Low > 0;
}

/// <summary>
/// How a group and its rest moved from an earlier window to the compared one. A group whose
/// distribution moved exactly as the rest's did is called (by any one measure) only when one of the
/// four statements behind it fails, each holding at the confidence.
/// </summary>
/// <param name="CountBefore">Values in the group in the earlier window.</param>
/// <param name="SeriesBefore">Series merged into the group in the earlier window.</param>
/// <param name="RestCountBefore">Values in the rest in the earlier window.</param>
/// <param name="RestSeriesBefore">Series merged into the rest in the earlier window.</param>
/// <param name="Quantiles">Each compared quantile's move; empty when any of the four sides holds no values.</param>
/// <param name="GroupDistance">Distance between the group's two windows; null when either is empty.</param>
/// <param name="RestDistance">Distance between the rest's two windows; null when either is empty.</param>
public sealed record StandoutMove(
    long CountBefore,
    int SeriesBefore,
    long RestCountBefore,
    int RestSeriesBefore,
    IReadOnlyList<QuantileMove> Quantiles,
    DistanceVerdict? GroupDistance,
    DistanceVerdict? RestDistance)
{
    /// <summary>Group distance less rest distance; 0 when either is missing.</summary>
    public double DistanceExcess => GroupDistance is { } g && RestDistance is { } r ? g.Distance - r.Distance : 0;

    /// <summary>
    /// True when the group's population distance is surely larger, or surely smaller, than the
    /// rest's: a sample's distance lies within its limit of the populations' (DKW, Massart 1990),
    /// so one's lower bound less its limit above the other's upper bound plus its limit settles it.
    /// </summary>
    public bool DistanceSignificant => GroupDistance is { } g && RestDistance is { } r
        && ((g.Low - g.Limit > r.High + r.Limit) || (r.Low - r.Limit > g.High + g.Limit));
}
