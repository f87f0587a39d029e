using SummaryService.Contract.V1;
using Domain = SummaryService.Sketches.Summaries;

namespace SummaryService.Server.Validation;

/// <summary>
/// Checks a <see cref="StandoutRequest"/>'s own fields (the selector and windows go through
/// <see cref="QueryRequests"/>); every refusal names the field and the value.
/// </summary>
public static class StandoutRequests
{
    /// <summary>The label to split by, which must be named.</summary>
    public static string SplitByOf(string splitBy) =>
        string.IsNullOrEmpty(splitBy) ? throw RpcErrors.Invalid("split_by", "split_by is empty; name the label whose values are ranked.") : splitBy;

    /// <summary>The options: quantiles strictly inside (0, 1), a known measure, and a measure quantile among the quantiles.</summary>
    public static Domain.StandoutOptions OptionsOf(StandoutRequest request)
    {
        ArgumentNullException.ThrowIfNull(request);
        for (int i = 0; i < request.Quantiles.Count; i++)
        {
            double q = request.Quantiles[i];
            if (!(q > 0 && q < 1))
            {
                throw RpcErrors.Invalid($"quantiles[{i}]", $"quantiles[{i}] is {q}; compared quantiles must lie strictly between 0 and 1 (a sample's extremes bound nothing about the population's).");
            }
        }

        double confidence = request.Confidence;
        if (confidence != 0 && !(confidence > 0 && confidence < 1))
        {
            throw RpcErrors.Invalid("confidence", $"confidence is {confidence}; it must lie strictly between 0 and 1 (0 means {Domain.SummaryOptions.DefaultConfidence}).");
        }

        Domain.StandoutMeasure measure = request.Measure switch
        {
            StandoutMeasure.Unspecified or StandoutMeasure.Distance => Domain.StandoutMeasure.Distance,
            StandoutMeasure.QuantileRatio => Domain.StandoutMeasure.QuantileRatio,
            StandoutMeasure.QuantileShift => Domain.StandoutMeasure.QuantileShift,
            _ => throw RpcErrors.Invalid("measure", $"measure is {(int)request.Measure}; use distance, quantile ratio or quantile shift."),
        };
        IReadOnlyList<double> quantiles = request.Quantiles.Count == 0 ? Domain.StandoutOptions.DefaultQuantiles : [.. request.Quantiles];
        double measureQuantile = request.MeasureQuantile == 0 ? quantiles.Max() : request.MeasureQuantile;
        if (measure != Domain.StandoutMeasure.Distance && !quantiles.Contains(measureQuantile))
        {
            throw RpcErrors.Invalid("measure_quantile", $"measure_quantile is {measureQuantile}, not one of the quantiles compared ({string.Join(", ", quantiles)}).");
        }

        return new Domain.StandoutOptions
        {
            Quantiles = quantiles,
            Confidence = confidence == 0 ? Domain.SummaryOptions.DefaultConfidence : confidence,
            Measure = measure,
            MeasureQuantile = measureQuantile,
        };
    }
}
