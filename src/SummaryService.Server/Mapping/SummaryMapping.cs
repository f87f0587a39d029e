using SummaryService.Contract.V1;
using SummaryService.Store;
using Domain = SummaryService.Sketches.Summaries;
using DomainModes = SummaryService.Sketches.Modes;

namespace SummaryService.Server.Mapping;

/// <summary>Sketch summaries to their wire form; absent statistics stay absent (proto3 optional), never 0.</summary>
public static class SummaryMapping
{
    /// <summary>The wire form of a summary.</summary>
    public static Summary ToProto(Domain.Summary summary)
    {
        ArgumentNullException.ThrowIfNull(summary);
        var proto = new Summary
        {
            Count = (ulong)summary.Count,
            Exact = summary.Exact,
            RankError = summary.RankError,
            Confidence = summary.Confidence,
            ModesOmitted = (uint)summary.ModesOmitted,
            Form = ToProto(summary.Form),
            MadLowSource = ToProto(summary.MadLowSource),
            MadHighSource = ToProto(summary.MadHighSource),
            IqrLowSource = ToProto(summary.IqrLowSource),
            IqrHighSource = ToProto(summary.IqrHighSource),
            ExtremesBounded = summary.ExtremesBounded,
        };
        Set(summary.Sum, v => proto.Sum = v);
        Set(summary.Mean, v => proto.Mean = v);
        Set(summary.Variance, v => proto.Variance = v);
        Set(summary.PopulationVariance, v => proto.PopulationVariance = v);
        Set(summary.StandardDeviation, v => proto.Stddev = v);
        Set(summary.StandardError, v => proto.StandardError = v);
        Set(summary.Skewness, v => proto.Skewness = v);
        Set(summary.Kurtosis, v => proto.Kurtosis = v);
        Set(summary.Min, v => proto.Min = v);
        Set(summary.Max, v => proto.Max = v);
        Set(summary.Range, v => proto.Range = v);
        Set(summary.MeanLow, v => proto.MeanLow = v);
        Set(summary.MeanHigh, v => proto.MeanHigh = v);
        Set(summary.Iqr, v => proto.Iqr = v);
        Set(summary.IqrLow, v => proto.IqrLow = v);
        Set(summary.IqrHigh, v => proto.IqrHigh = v);
        Set(summary.Mad, v => proto.Mad = v);
        Set(summary.MadLow, v => proto.MadLow = v);
        Set(summary.MadHigh, v => proto.MadHigh = v);
        Set(summary.QuartileSkewness, v => proto.QuartileSkewness = v);
        Set(summary.RelativeError, v => proto.RelativeError = v);
        if (summary.BucketScale is { } scale)
        {
            proto.BucketScale = scale;
        }

        // Loops, not LINQ: a Series answer maps one summary per step, hundreds per call.
        foreach (var q in summary.Quantiles)
        {
            proto.Quantiles.Add(ToProto(q));
        }

        foreach (var r in summary.Ranks)
        {
            proto.Ranks.Add(new RankEstimate { Value = r.Value, Fraction = r.Fraction, Low = r.Low, High = r.High, LowSource = ToProto(r.LowSource), HighSource = ToProto(r.HighSource) });
        }

        foreach (var m in summary.Modes)
        {
            proto.Modes.Add(new ModeEstimate
            {
                Value = m.Value,
                Count = (ulong)m.Count,
                CountLow = (ulong)m.CountLow,
                CountHigh = (ulong)m.CountHigh,
                Kind = m.Kind == DomainModes.ModeKind.Region ? ModeKind.Region : ModeKind.ExactValue,
                Low = m.Low,
                High = m.High,
                Share = m.Share,
            });
        }

        if (summary.FiveNumber is { } five)
        {
            proto.FiveNumber = new FiveNumberSummary { Min = five.Min, LowerQuartile = ToProto(five.LowerQuartile), Median = ToProto(five.Median), UpperQuartile = ToProto(five.UpperQuartile), Max = five.Max };
        }

        if (summary.Histogram is { } bins)
        {
            proto.Histogram = new Histogram();
            foreach (var b in bins)
            {
                proto.Histogram.Bins.Add(new HistogramBin { Lower = b.Lower, Upper = b.Upper, Count = b.Count, CountLow = b.CountLow, CountHigh = b.CountHigh, LowSource = ToProto(b.LowSource), HighSource = ToProto(b.HighSource) });
            }
        }

        return proto;
    }

    /// <summary>The wire form of a quantile estimate.</summary>
    public static QuantileEstimate ToProto(Domain.QuantileEstimate q) =>
        new() { Q = q.Q, Value = q.Value, Low = q.Low, High = q.High, RankError = q.RankError, LowSource = ToProto(q.LowSource), HighSource = ToProto(q.HighSource) };

    /// <summary>The wire form of a quantile shift: each side's interval holds its population quantile.</summary>
    public static QuantileShift ToProto(Domain.QuantileShift shift) => new()
    {
        Q = shift.Q,
        A = shift.A.Value,
        B = shift.B.Value,
        Delta = shift.Delta,
        Low = shift.Low,
        High = shift.High,
        Significant = shift.Significant,
        ALow = shift.A.Low,
        AHigh = shift.A.High,
        BLow = shift.B.Low,
        BHigh = shift.B.High,
        ALowSource = ToProto(shift.A.LowSource),
        AHighSource = ToProto(shift.A.HighSource),
        BLowSource = ToProto(shift.B.LowSource),
        BHighSource = ToProto(shift.B.HighSource),
    };

    /// <summary>The wire form of a bound's source; the two enums list the same sources in the same order.</summary>
    public static BoundSource ToProto(Domain.BoundSource source) => (BoundSource)(int)source;

    /// <summary>The wire form of the parts a summary was read from (the wire enum starts with an unset value).</summary>
    public static SketchForm ToProto(Domain.SketchForm form) => (SketchForm)((int)form + 1);

    /// <summary>The wire form of a time range.</summary>
    public static TimeRange ToProto(TimeWindow range) => new() { FromUnixMs = range.FromUnixMs, ToUnixMs = range.ToUnixMs };

    /// <summary>The wire form of a window query's answer.</summary>
    public static SummarizeReply ToProto(WindowSummary window)
    {
        ArgumentNullException.ThrowIfNull(window);
        var reply = new SummarizeReply { Covered = ToProto(window.Covered) };
        foreach (SummarizedGroup group in window.Groups)
        {
            reply.Groups.Add(ToProto(group));
        }
        return reply;
    }

    /// <summary>The wire form of one group.</summary>
    public static GroupSummary ToProto(SummarizedGroup group)
    {
        ArgumentNullException.ThrowIfNull(group);
        var proto = new GroupSummary { Summary = ToProto(group.Summary), SeriesMerged = (uint)group.SeriesMerged };
        foreach (var (name, value) in group.Labels)
        {
            proto.Labels[name] = value;
        }
        return proto;
    }

    private static void Set(double? value, Action<double> set)
    {
        if (value is { } v)
        {
            set(v);
        }
    }
}
