using Google.Protobuf.Collections;
using SummaryService.Contract.Otlp.Common;
using SummaryService.Contract.Otlp.Metrics;
using SummaryService.Sketches.Buckets;

namespace SummaryService.Server.Otlp;

/// <summary>
/// Explicit-bounds histogram points become sketches with edge buckets: the producer's edges and
/// exact counts, answered with intervals from the edges (see <see cref="EdgeBucketSketch"/>).
/// Cumulative points become their differences per stream, like exponential histograms.
/// </summary>
public sealed partial class MetricsTranslator
{
    private static readonly CumulativeDifference<EdgeHistogramPoint> s_edgesSince = (EdgeHistogramPoint earlier, EdgeHistogramPoint later, out EdgeHistogramPoint difference) =>
    {
        EdgeHistogramPoint? since = later.Since(earlier);
        difference = since ?? later;
        return since is not null;
    };

    private void PlanExplicit(ExportPlan plan, Metric metric, Dictionary<string, string> resourceLabels, byte[] streamPrefix)
    {
        Histogram histogram = metric.Histogram;
        bool isCumulative = histogram.AggregationTemporality == AggregationTemporality.Cumulative;
        if (!isCumulative && histogram.AggregationTemporality != AggregationTemporality.Delta)
        {
            plan.Rejections.Reject(histogram.DataPoints.Count, $"metric '{metric.Name}' is a histogram with aggregation_temporality {(int)histogram.AggregationTemporality}; a histogram is delta (1) or cumulative (2)");
            return;
        }

        for (int i = 0; i < histogram.DataPoints.Count; i++)
        {
            HistogramDataPoint point = histogram.DataPoints[i];
            if (NoRecordedValue(point.Flags) || (!isCumulative && point.Count == 0))
            {
                continue;
            }

            if (ExplicitPoints.Invalid(point, $"histogram.data_points[{i}]") is { } invalid)
            {
                plan.Rejections.Reject(1, $"metric '{metric.Name}' {invalid}");
                continue;
            }

            EdgeHistogramPoint values = ExplicitPoints.PointOf(point);
            if (isCumulative)
            {
                UInt128 stream = StreamIdentity.Of(streamPrefix, metric.Name, point.Attributes);
                var (outcome, delta) = cumulative.Next(stream, point.StartTimeUnixNano, point.TimeUnixNano, values, s_edgesSince);
                if (!Recorded(plan, metric.Name, outcome, point.TimeUnixNano) || delta!.Count == 0)
                {
                    continue;
                }

                values = delta;
            }

            AddExplicit(plan, metric.Name, point.Attributes, resourceLabels, values, point.TimeUnixNano);
        }

        plan.Rejections.Note("explicit-bounds histograms give count, sum, min, max and their bucket counts; quantiles are bounded by the edges of the buckets that hold them, and variance, skewness and kurtosis are absent");
    }

    private void AddExplicit(ExportPlan plan, string metric, RepeatedField<KeyValue> attributes, Dictionary<string, string> resourceLabels, EdgeHistogramPoint values, ulong timeUnixNano)
    {
        if (LabelsOf(plan, metric, attributes, resourceLabels) is not { } labels)
        {
            return;
        }

        if (!values.ExtremesExact)
        {
            plan.Rejections.Note($"metric '{metric}': between two cumulative points no new min or max was recorded, so the difference's extremes are known only to lie in its outermost buckets; its summaries say extremes_bounded and give min and max as outer bounds");
        }

        plan.Sketches.Add(new PlannedSketch(new Store.UploadedSketch
        {
            Metric = metric,
            Labels = labels,
            Sketch = values.ToSketch(sketchOptions),
            TimeUnixMs = MillisOf(timeUnixNano),
        }));
    }
}
