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
        if (IsCumulative(plan, metric.Name, "a histogram", histogram.AggregationTemporality, histogram.DataPoints.Count) is not { } isCumulative)
        {
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

            var at = new PointPlace(metric.Name, point.Attributes, point.StartTimeUnixNano, point.TimeUnixNano);
            if (Added(plan, at, isCumulative, streamPrefix, ExplicitPoints.PointOf(point), s_edgesSince, v => v.Count) is { } values)
            {
                AddSketch(plan, at, resourceLabels, values.ExtremesExact, () => values.ToSketch(sketchOptions));
            }
        }

        plan.Rejections.Note("explicit-bounds histograms give count, sum, min, max and their bucket counts; quantiles are bounded by the edges of the buckets that hold them, and variance, skewness and kurtosis are absent");
    }
}
