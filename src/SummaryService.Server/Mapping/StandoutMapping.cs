using SummaryService.Contract.V1;
using Domain = SummaryService.Sketches.Summaries;

namespace SummaryService.Server.Mapping;

/// <summary>A split's ranking to its wire form; absent figures stay absent, never 0.</summary>
public static class StandoutMapping
{
    /// <summary>The wire form of a ranking and how it was asked.</summary>
    public static StandoutReply ToProto(Domain.StandoutRanking ranking, Domain.StandoutOptions options)
    {
        ArgumentNullException.ThrowIfNull(ranking);
        ArgumentNullException.ThrowIfNull(options);
        var reply = new StandoutReply
        {
            Measure = ToProto(options.Measure),
            MeasureQuantile = options.Measure == Domain.StandoutMeasure.Distance ? 0 : options.MeasureQuantile,
            Confidence = options.Confidence,
        };
        foreach (Domain.StandoutGroup group in ranking.Ranked)
        {
            reply.Ranked.Add(ToProto(group));
        }

        foreach (Domain.StandoutGroup group in ranking.Unranked)
        {
            reply.Unranked.Add(ToProto(group));
        }

        return reply;
    }

    /// <summary>The wire form of one group against its rest.</summary>
    public static StandoutGroup ToProto(Domain.StandoutGroup group)
    {
        ArgumentNullException.ThrowIfNull(group);
        var proto = new StandoutGroup
        {
            Value = group.Value,
            Count = (ulong)group.Count,
            SeriesMerged = (uint)group.Series,
            RestCount = (ulong)group.RestCount,
            RestSeriesMerged = (uint)group.RestSeries,
            Distance = group.Distance is { } d ? ToProto(d) : null,
            Mean = group.Mean is { } m ? ToProto(m) : null,
            Standing = (StandoutStanding)((int)group.Standing + 1),
            Strength = group.Strength,
            Significant = group.Significant,
            Move = group.Move is { } move ? ToProto(move) : null,
        };
        foreach (Domain.StandoutQuantile q in group.Quantiles)
        {
            var quantile = new StandoutQuantile { Shift = SummaryMapping.ToProto(q.Shift), Bounded = q.Bounded };
            if (q.Ratio is { } ratio)
            {
                quantile.Ratio = ratio;
                quantile.RatioLow = q.RatioLow!.Value;
                quantile.RatioHigh = q.RatioHigh!.Value;
            }

            proto.Quantiles.Add(quantile);
        }

        return proto;
    }

    /// <summary>The wire form of the measure (the wire enum starts with an unset value).</summary>
    public static StandoutMeasure ToProto(Domain.StandoutMeasure measure) => (StandoutMeasure)((int)measure + 1);

    private static StandoutDistance ToProto(Domain.DistanceVerdict d) =>
        new() { Distance = d.Distance, Low = d.Low, High = d.High, Limit = d.Limit, Significant = d.Significant };

    private static MeanDifference ToProto(Domain.MeanDifference m) => new()
    {
        A = m.A,
        B = m.B,
        Delta = m.Delta,
        Low = m.Low,
        High = m.High,
        DegreesOfFreedom = m.DegreesOfFreedom,
        Significant = m.Significant,
    };

    private static StandoutMove ToProto(Domain.StandoutMove move)
    {
        var proto = new StandoutMove
        {
            CountBefore = (ulong)move.CountBefore,
            SeriesBefore = (uint)move.SeriesBefore,
            RestCountBefore = (ulong)move.RestCountBefore,
            RestSeriesBefore = (uint)move.RestSeriesBefore,
            GroupDistance = move.GroupDistance is { } g ? ToProto(g) : null,
            RestDistance = move.RestDistance is { } r ? ToProto(r) : null,
            DistanceExcess = move.DistanceExcess,
            DistanceSignificant = move.DistanceSignificant,
        };
        foreach (Domain.QuantileMove q in move.Quantiles)
        {
            var quantile = new QuantileMove
            {
                Q = q.Group.Q,
                Group = SummaryMapping.ToProto(q.Group),
                Rest = SummaryMapping.ToProto(q.Rest),
                Excess = q.Excess,
                ExcessLow = q.ExcessLow,
                ExcessHigh = q.ExcessHigh,
                Bounded = q.Bounded,
                Significant = q.Significant,
            };
            if (q.LogRatioExcess is { } excess)
            {
                quantile.LogRatioExcess = excess;
                quantile.LogRatioExcessLow = q.LogRatioExcessLow!.Value;
                quantile.LogRatioExcessHigh = q.LogRatioExcessHigh!.Value;
            }

            proto.Quantiles.Add(quantile);
        }

        return proto;
    }
}
