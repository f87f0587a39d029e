using Google.Protobuf.Collections;
using SummaryService.Contract.Otlp.Collector;
using SummaryService.Contract.Otlp.Common;
using SummaryService.Contract.Otlp.Metrics;
using SummaryService.Server.Validation;
using SummaryService.Sketches;
using SummaryService.Sketches.Buckets;

namespace SummaryService.Server.Otlp;

/// <summary>
/// Reads an export as series: the metric name is the metric, allowlisted resource attributes and the
/// point's attributes are the labels, and each kind of point becomes what the store can keep of it.
/// Malformed requests are refused whole (<see cref="Check"/>); points that are well formed but
/// cannot be represented are counted in the plan's rejections for OTLP's partial-success reply.
/// </summary>
public sealed partial class MetricsTranslator(OtlpSettings settings, SeriesSketchOptions sketchOptions, CumulativeStreams cumulative)
{
    private const ulong NanosPerMilli = 1_000_000;

    private static readonly CumulativeDifference<ExponentialHistogramPoint> s_histogramSince = (ExponentialHistogramPoint earlier, ExponentialHistogramPoint later, out ExponentialHistogramPoint difference) =>
    {
        ExponentialHistogramPoint? since = ExponentialHistogramDifference.Since(earlier, later);
        difference = since ?? later;
        return since is not null;
    };

    private readonly HashSet<string> _resourceLabels = new(settings.EffectiveResourceLabels, StringComparer.Ordinal);

    /// <summary>Refuses a request whose structure breaks the protocol's rules, naming the field and its value; changes nothing.</summary>
    public static void Check(ExportMetricsServiceRequest request)
    {
        ArgumentNullException.ThrowIfNull(request);
        foreach (var (metric, path) in MetricsOf(request))
        {
            if (metric.Name.Length == 0)
            {
                throw RpcErrors.Invalid($"{path}.name", $"{path}.name is ''; every metric needs a name.");
            }

            switch (metric.DataCase)
            {
                case Metric.DataOneofCase.Gauge:
                    CheckTimes(metric.Gauge.DataPoints, p => p.TimeUnixNano, $"{path}.gauge");
                    break;
                case Metric.DataOneofCase.Sum:
                    CheckTimes(metric.Sum.DataPoints, p => p.TimeUnixNano, $"{path}.sum");
                    break;
                case Metric.DataOneofCase.Histogram:
                    CheckTimes(metric.Histogram.DataPoints, p => p.TimeUnixNano, $"{path}.histogram");
                    break;
                case Metric.DataOneofCase.ExponentialHistogram:
                    CheckTimes(metric.ExponentialHistogram.DataPoints, p => p.TimeUnixNano, $"{path}.exponential_histogram");
                    for (int i = 0; i < metric.ExponentialHistogram.DataPoints.Count; i++)
                    {
                        ExponentialPoints.Check(metric.ExponentialHistogram.DataPoints[i], $"{path}.exponential_histogram.data_points[{i}]");
                    }

                    break;
            }
        }
    }

    /// <summary>Every metric name of the request, for the access check before anything is read further.</summary>
    public static IEnumerable<(string Name, string Field)> Names(ExportMetricsServiceRequest request) =>
        MetricsOf(request).Select(m => (m.Metric.Name, $"{m.Path}.name"));

    /// <summary>The series, values and sketches of a checked request; cumulative streams advance here.</summary>
    public ExportPlan Plan(ExportMetricsServiceRequest request)
    {
        ArgumentNullException.ThrowIfNull(request);
        var plan = new ExportPlan();
        foreach (ResourceMetrics resource in request.ResourceMetrics)
        {
            var resourceLabels = new Dictionary<string, string>(StringComparer.Ordinal);
            string? clash = AttributeLabels.AddTo(resourceLabels, resource.Resource?.Attributes ?? [], _resourceLabels.Contains);
            foreach (ScopeMetrics scope in resource.ScopeMetrics)
            {
                byte[] streamPrefix = StreamIdentity.PrefixOf(resource.Resource?.Attributes, scope.Scope);
                foreach (Metric metric in scope.Metrics)
                {
                    if (clash is not null)
                    {
                        plan.Rejections.Reject(PointsOf(metric), $"resource {clash}");
                        continue;
                    }

                    PlanMetric(plan, metric, resourceLabels, streamPrefix);
                }
            }
        }

        return plan;
    }

    private void PlanMetric(ExportPlan plan, Metric metric, Dictionary<string, string> resourceLabels, byte[] streamPrefix)
    {
        switch (metric.DataCase)
        {
            case Metric.DataOneofCase.Gauge:
                foreach (NumberDataPoint point in metric.Gauge.DataPoints)
                {
                    AddNumber(plan, metric.Name, point, resourceLabels);
                }

                break;
            case Metric.DataOneofCase.Sum:
                PlanSum(plan, metric, resourceLabels, streamPrefix);
                break;
            case Metric.DataOneofCase.ExponentialHistogram:
                PlanExponential(plan, metric, resourceLabels, streamPrefix);
                break;
            case Metric.DataOneofCase.Histogram:
                PlanExplicit(plan, metric, resourceLabels, streamPrefix);
                break;
            case Metric.DataOneofCase.Summary:
                plan.Rejections.Reject(metric.Summary.DataPoints.Count, $"metric '{metric.Name}' is a summary (pre-computed quantiles), which cannot be merged; export a histogram instead");
                break;
            default:
                break;
        }
    }

    private void PlanSum(ExportPlan plan, Metric metric, Dictionary<string, string> resourceLabels, byte[] streamPrefix)
    {
        Sum sum = metric.Sum;
        switch (sum.AggregationTemporality)
        {
            case AggregationTemporality.Delta:
                foreach (NumberDataPoint point in sum.DataPoints)
                {
                    AddNumber(plan, metric.Name, point, resourceLabels);
                }

                return;
            case AggregationTemporality.Cumulative:
                foreach (NumberDataPoint point in sum.DataPoints)
                {
                    AddCumulative(plan, metric.Name, point, resourceLabels, streamPrefix, sum.IsMonotonic);
                }

                return;
            default:
                plan.Rejections.Reject(sum.DataPoints.Count, $"metric '{metric.Name}' has aggregation_temporality {(int)sum.AggregationTemporality}; a sum is delta (1) or cumulative (2)");
                return;
        }
    }

    private void AddCumulative(ExportPlan plan, string metric, NumberDataPoint point, Dictionary<string, string> resourceLabels, byte[] streamPrefix, bool monotonic)
    {
        if (!TryValueOf(plan, metric, point, out double value))
        {
            return;
        }

        UInt128 stream = StreamIdentity.Of(streamPrefix, metric, point.Attributes);
        var (outcome, delta) = cumulative.Next(stream, point.StartTimeUnixNano, point.TimeUnixNano, value, monotonic);
        if (Recorded(plan, metric, outcome, point.TimeUnixNano))
        {
            AddValue(plan, metric, point.Attributes, resourceLabels, delta, point.TimeUnixNano);
        }
    }

    // Whether a cumulative point gave a difference to record; what else became of it goes in the reply.
    private bool Recorded(ExportPlan plan, string metric, CumulativeOutcome outcome, ulong timeUnixNano)
    {
        switch (outcome)
        {
            case CumulativeOutcome.Delta:
                return true;
            case CumulativeOutcome.Baseline:
                plan.Rejections.Baseline();
                return false;
            case CumulativeOutcome.Stale:
                plan.Rejections.Reject(1, $"metric '{metric}' sent a cumulative point at time_unix_nano {timeUnixNano}, not after its stream's last point (already received)");
                return false;
            default:
                plan.Rejections.Reject(1, $"metric '{metric}' starts a cumulative stream beyond Otlp:MaxCumulativeStreams ({settings.MaxCumulativeStreams}); send delta temporality");
                return false;
        }
    }

    private void AddNumber(ExportPlan plan, string metric, NumberDataPoint point, Dictionary<string, string> resourceLabels)
    {
        if (TryValueOf(plan, metric, point, out double value))
        {
            AddValue(plan, metric, point.Attributes, resourceLabels, value, point.TimeUnixNano);
        }
    }

    private static bool TryValueOf(ExportPlan plan, string metric, NumberDataPoint point, out double value)
    {
        value = 0;
        if (NoRecordedValue(point.Flags))
        {
            return false;
        }

        switch (point.ValueCase)
        {
            case NumberDataPoint.ValueOneofCase.AsDouble:
                value = point.AsDouble;
                break;
            case NumberDataPoint.ValueOneofCase.AsInt:
                value = point.AsInt;
                break;
            default:
                plan.Rejections.Reject(1, $"metric '{metric}' has a point with neither as_double nor as_int");
                return false;
        }

        if (!double.IsFinite(value))
        {
            plan.Rejections.Reject(1, $"metric '{metric}' has a point of value {value}; values are finite");
            return false;
        }

        return true;
    }

    private void AddValue(ExportPlan plan, string metric, RepeatedField<KeyValue> attributes, Dictionary<string, string> resourceLabels, double value, ulong timeUnixNano)
    {
        if (LabelsOf(plan, metric, attributes, resourceLabels) is { } labels)
        {
            plan.AddValue(metric, labels, value, MillisOf(timeUnixNano));
        }
    }

    private void PlanExponential(ExportPlan plan, Metric metric, Dictionary<string, string> resourceLabels, byte[] streamPrefix)
    {
        ExponentialHistogram histogram = metric.ExponentialHistogram;
        if (IsCumulative(plan, metric.Name, "an exponential histogram", histogram.AggregationTemporality, histogram.DataPoints.Count) is not { } isCumulative)
        {
            return;
        }

        foreach (ExponentialHistogramDataPoint point in histogram.DataPoints)
        {
            if (NoRecordedValue(point.Flags) || (!isCumulative && point.Count == 0))
            {
                continue;
            }

            if (point.Count > 0 && ExponentialPoints.Incomplete(point) is { } incomplete)
            {
                plan.Rejections.Reject(1, $"metric '{metric.Name}' {incomplete}");
                continue;
            }

            var at = new PointPlace(metric.Name, point.Attributes, point.StartTimeUnixNano, point.TimeUnixNano);
            if (Added(plan, at, isCumulative, streamPrefix, ExponentialPoints.PointOf(point), s_histogramSince, v => v.Count) is not { } values)
            {
                continue;
            }

            if (ExponentialHistogramImport.Unrepresentable(values, sketchOptions) is { } reason)
            {
                plan.Rejections.Reject(1, $"metric '{metric.Name}' has an exponential histogram point that {reason}");
                continue;
            }

            AddSketch(plan, at, resourceLabels, values.ExtremesExact, () => ExponentialHistogramImport.ToSketch(values, sketchOptions));
        }

        plan.Rejections.Note("exponential histograms give count, sum, min, max and log buckets; their variance, skewness and kurtosis are absent");
    }

    private static Dictionary<string, string>? LabelsOf(ExportPlan plan, string metric, RepeatedField<KeyValue> attributes, Dictionary<string, string> resourceLabels)
    {
        var labels = new Dictionary<string, string>(resourceLabels, StringComparer.Ordinal);
        if (AttributeLabels.AddTo(labels, attributes) is { } clash)
        {
            plan.Rejections.Reject(1, $"metric '{metric}' has a point whose {clash}");
            return null;
        }

        return labels;
    }

    private static bool NoRecordedValue(uint flags) => (flags & (uint)DataPointFlags.NoRecordedValueMask) != 0;

    // time_unix_nano is checked non-zero; a point within the first millisecond of 1970 would read as "now" to the store, so it is kept at 1 ms.
    private static long MillisOf(ulong timeUnixNano) => Math.Max(1, (long)(timeUnixNano / NanosPerMilli));

    private static long PointsOf(Metric metric) => metric.DataCase switch
    {
        Metric.DataOneofCase.Gauge => metric.Gauge.DataPoints.Count,
        Metric.DataOneofCase.Sum => metric.Sum.DataPoints.Count,
        Metric.DataOneofCase.Histogram => metric.Histogram.DataPoints.Count,
        Metric.DataOneofCase.ExponentialHistogram => metric.ExponentialHistogram.DataPoints.Count,
        Metric.DataOneofCase.Summary => metric.Summary.DataPoints.Count,
        _ => 0,
    };

    private static void CheckTimes<T>(RepeatedField<T> points, Func<T, ulong> time, string path)
    {
        for (int i = 0; i < points.Count; i++)
        {
            if (time(points[i]) == 0)
            {
                throw RpcErrors.Invalid($"{path}.data_points[{i}].time_unix_nano", $"{path}.data_points[{i}].time_unix_nano is 0; every point needs the time it was taken.");
            }
        }
    }

    private static IEnumerable<(Metric Metric, string Path)> MetricsOf(ExportMetricsServiceRequest request)
    {
        for (int r = 0; r < request.ResourceMetrics.Count; r++)
        {
            ResourceMetrics resource = request.ResourceMetrics[r];
            for (int s = 0; s < resource.ScopeMetrics.Count; s++)
            {
                ScopeMetrics scope = resource.ScopeMetrics[s];
                for (int m = 0; m < scope.Metrics.Count; m++)
                {
                    yield return (scope.Metrics[m], $"resource_metrics[{r}].scope_metrics[{s}].metrics[{m}]");
                }
            }
        }
    }
}
