namespace SummaryService.Sketches.Summaries;

/// <summary>How a group and its rest moved between two windows, and where that puts the group in a ranking.</summary>
internal static class Moves
{
    /// <summary>The move of a group and its rest, every side prepared once by the caller (at one confidence).</summary>
    public static StandoutMove Of(int seriesBefore, ComparisonSide groupBefore, ComparisonSide restBefore, int restSeriesBefore, ComparisonSide groupNow, ComparisonSide restNow, IReadOnlyList<double> probabilities)
    {
        double confidence = groupBefore.ConfidenceLevel;
        bool filled = groupBefore.Count > 0 && restBefore.Count > 0 && groupNow.Count > 0 && restNow.Count > 0;
        var quantiles = new List<QuantileMove>();
        if (filled)
        {
            QuantileShift[] own = SketchComparison.Shifts(groupBefore, groupNow, probabilities);
            QuantileShift[] rest = SketchComparison.Shifts(restBefore, restNow, probabilities);
            for (int q = 0; q < own.Length; q++)
            {
                quantiles.Add(new QuantileMove(own[q], rest[q], SplitComparison.Bounded(own[q].Q, confidence, groupBefore.Count, groupNow.Count, restBefore.Count, restNow.Count)));
            }
        }

        DistanceVerdict? groupDistance = groupBefore.Count > 0 && groupNow.Count > 0 ? SplitComparison.Distance(groupBefore, groupNow) : null;
        DistanceVerdict? restDistance = restBefore.Count > 0 && restNow.Count > 0 ? SplitComparison.Distance(restBefore, restNow) : null;
        return new StandoutMove(groupBefore.Count, seriesBefore, restBefore.Count, restSeriesBefore, quantiles, groupDistance, restDistance);
    }

    public static (StandoutStanding Standing, double Strength, bool Significant) Measure(StandoutMove move, StandoutOptions options)
    {
        if (options.Measure == StandoutMeasure.Distance)
        {
            // Either side's limit at 1 or more: its distance could be pure chance whatever it is.
            bool judged = move.GroupDistance is { Limit: < 1 } && move.RestDistance is { Limit: < 1 };
            return judged ? (StandoutStanding.Ranked, Math.Abs(move.DistanceExcess), move.DistanceSignificant) : (StandoutStanding.TooSmall, 0, false);
        }

        if (move.Quantiles.Count == 0)
        {
            return (StandoutStanding.TooSmall, 0, false);
        }

        QuantileMove chosen = move.Quantiles.First(q => q.Group.Q == options.MeasureQuantile);
        if (!chosen.Bounded)
        {
            return (StandoutStanding.TooSmall, 0, false);
        }

        if (options.Measure == StandoutMeasure.QuantileShift)
        {
            return (StandoutStanding.Ranked, Math.Abs(chosen.Excess), chosen.Significant);
        }

        return chosen.LogRatioExcess is double excess ? (StandoutStanding.Ranked, Math.Abs(excess), chosen.RatioSignificant) : (StandoutStanding.NoRatio, 0, false);
    }
}
