namespace SummaryService.Sketches.Summaries;

/// <summary>How a group and its rest moved between two windows, and where that puts the group in a ranking.</summary>
internal static class Moves
{
    public static StandoutMove Of(StandoutInput groupBefore, SeriesSketch restBefore, int restSeriesBefore, SeriesSketch groupNow, SeriesSketch restNow, IReadOnlyList<double> probabilities, double confidence)
    {
        SeriesSketch group = groupBefore.Sketch;
        bool filled = group.Count > 0 && restBefore.Count > 0 && groupNow.Count > 0 && restNow.Count > 0;
        var quantiles = new List<QuantileMove>();
        if (filled)
        {
            QuantileShift[] own = SketchComparison.Shifts(group, groupNow, probabilities, confidence);
            QuantileShift[] rest = SketchComparison.Shifts(restBefore, restNow, probabilities, confidence);
            for (int q = 0; q < own.Length; q++)
            {
                quantiles.Add(new QuantileMove(own[q], rest[q], SplitComparison.Bounded(own[q].Q, confidence, group, groupNow, restBefore, restNow)));
            }
        }

        DistanceVerdict? groupDistance = group.Count > 0 && groupNow.Count > 0 ? SplitComparison.Distance(group, groupNow, confidence) : null;
        DistanceVerdict? restDistance = restBefore.Count > 0 && restNow.Count > 0 ? SplitComparison.Distance(restBefore, restNow, confidence) : null;
        return new StandoutMove(group.Count, groupBefore.Series, restBefore.Count, restSeriesBefore, quantiles, groupDistance, restDistance);
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
