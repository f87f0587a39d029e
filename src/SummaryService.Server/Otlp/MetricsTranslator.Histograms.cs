using Google.Protobuf.Collections;
using SummaryService.Contract.Otlp.Common;
using SummaryService.Contract.Otlp.Metrics;
using SummaryService.Sketches;

namespace SummaryService.Server.Otlp;

/// <summary>What histogram points of either kind share on their way to sketches: temporality, cumulative differences, labels.</summary>
public sealed partial class MetricsTranslator
{
    /// <summary>Whether a histogram is cumulative (else delta); null, with all its points refused, for any other temporality.</summary>
    private static bool? IsCumulative(ExportPlan plan, string metric, string kind, AggregationTemporality temporality, int points)
    {
        if (temporality is AggregationTemporality.Delta or AggregationTemporality.Cumulative)
        {
            return temporality == AggregationTemporality.Cumulative;
        }

        plan.Rejections.Reject(points, $"metric '{metric}' is {kind} with aggregation_temporality {(int)temporality}; a histogram is delta (1) or cumulative (2)");
        return null;
    }

    /// <summary>
    /// The values a histogram point adds: its own (delta), or its difference from its stream's
    /// previous point (cumulative); null when nothing is to be recorded (what became of it is in the reply).
    /// </summary>
    private T? Added<T>(ExportPlan plan, PointPlace at, bool isCumulative, byte[] streamPrefix, T values, CumulativeDifference<T> since, Func<T, long> count)
        where T : class
    {
        if (!isCumulative)
        {
            return values;
        }

        UInt128 stream = StreamIdentity.Of(streamPrefix, at.Metric, at.Attributes);
        var (outcome, delta) = cumulative.Next(stream, at.StartUnixNano, at.TimeUnixNano, values, since);
        return Recorded(plan, at.Metric, outcome, at.TimeUnixNano) && count(delta!) > 0 ? delta : null;
    }

    /// <summary>Plans the sketch of one histogram point for its series, saying so when its extremes are only bounds.</summary>
    private void AddSketch(ExportPlan plan, PointPlace at, Dictionary<string, string> resourceLabels, bool extremesExact, Func<SeriesSketch> sketch)
    {
        if (LabelsOf(plan, at.Metric, at.Attributes, resourceLabels) is not { } labels)
        {
            return;
        }

        if (!extremesExact)
        {
            plan.Rejections.Note($"metric '{at.Metric}': between two cumulative points no new min or max was recorded, so the difference's extremes are known only to lie in its outermost buckets; its summaries say extremes_bounded and give min and max as outer bounds");
        }

        plan.Sketches.Add(new PlannedSketch(new Store.UploadedSketch
        {
            Metric = at.Metric,
            Labels = labels,
            Sketch = sketch(),
            TimeUnixMs = MillisOf(at.TimeUnixNano),
        }));
    }

    /// <summary>Where a point belongs: its metric, attributes and times.</summary>
    private readonly record struct PointPlace(string Metric, RepeatedField<KeyValue> Attributes, ulong StartUnixNano, ulong TimeUnixNano);
}
