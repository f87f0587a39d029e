using SummaryService.Contract.Otlp.Metrics;
using SummaryService.Server.Validation;
using SummaryService.Sketches.Buckets;

namespace SummaryService.Server.Otlp;

/// <summary>Exponential histogram points: the protocol's rules, what log buckets cannot hold, and the sketch of a point.</summary>
public static class ExponentialPoints
{
    /// <summary>Scales the data model allows (−10 to 20).</summary>
    private const int MinScale = -10;
    private const int MaxScale = 20;

    /// <summary>Refuses a point that breaks the data model's rules, naming the field and its value.</summary>
    public static void Check(ExponentialHistogramDataPoint point, string path)
    {
        ArgumentNullException.ThrowIfNull(point);
        if (point.Scale is < MinScale or > MaxScale)
        {
            throw RpcErrors.Invalid($"{path}.scale", $"{path}.scale is {point.Scale}; the data model allows {MinScale} to {MaxScale}.");
        }

        ulong total = point.ZeroCount;
        foreach (var (name, buckets) in new[] { ("positive", point.Positive), ("negative", point.Negative) })
        {
            if (buckets is null)
            {
                continue;
            }

            if ((long)buckets.Offset + buckets.BucketCounts.Count - 1 > int.MaxValue)
            {
                throw RpcErrors.Invalid($"{path}.{name}.offset", $"{path}.{name}.offset is {buckets.Offset} with {buckets.BucketCounts.Count} bucket_counts; bucket indices past {int.MaxValue} do not exist.");
            }

            foreach (ulong count in buckets.BucketCounts)
            {
                total = total + count < total ? ulong.MaxValue : total + count;
            }
        }

        if (total != point.Count)
        {
            throw RpcErrors.Invalid($"{path}.count", $"{path}.count is {point.Count} but zero_count and bucket_counts add up to {total}; they must agree.");
        }

        if (point.Count > long.MaxValue)
        {
            throw RpcErrors.Invalid($"{path}.count", $"{path}.count is {point.Count}; at most {long.MaxValue} values are counted.");
        }

        foreach (var (name, has, value) in new[] { ("sum", point.HasSum, point.Sum), ("min", point.HasMin, point.Min), ("max", point.HasMax, point.Max), ("zero_threshold", true, point.ZeroThreshold) })
        {
            if (has && !double.IsFinite(value))
            {
                throw RpcErrors.Invalid($"{path}.{name}", $"{path}.{name} is {value}; it must be finite.");
            }
        }

        if (point.HasMin && point.HasMax && point.Min > point.Max)
        {
            throw RpcErrors.Invalid($"{path}.min", $"{path}.min is {point.Min}, above max {point.Max}.");
        }
    }

    /// <summary>
    /// Why a checked point lacks what the moments and log buckets need (sum, min and max; exact
    /// zeros only), or null when it has it. Whether its buckets fit is asked of the values kept
    /// (<see cref="ExponentialHistogramImport.Unrepresentable"/>): for a cumulative point, its difference.
    /// </summary>
    public static string? Incomplete(ExponentialHistogramDataPoint point)
    {
        ArgumentNullException.ThrowIfNull(point);
        if (!point.HasSum || !point.HasMin || !point.HasMax)
        {
            return "has an exponential histogram point without sum, min or max; the moments need all three (the SDKs record them by default)";
        }

        if (point.ZeroThreshold > 0 && point.ZeroCount > 0)
        {
            return $"has an exponential histogram point with zero_threshold {point.ZeroThreshold}; log buckets count exact zeros only";
        }

        return null;
    }

    /// <summary>The values of a checked point, with its bucket counts copied (a cumulative stream keeps them past the request).</summary>
    public static ExponentialHistogramPoint PointOf(ExponentialHistogramDataPoint point)
    {
        ArgumentNullException.ThrowIfNull(point);
        return new(
            point.Scale,
            (long)point.ZeroCount,
            point.Positive?.Offset ?? 0,
            point.Positive?.BucketCounts.ToArray() ?? [],
            point.Negative?.Offset ?? 0,
            point.Negative?.BucketCounts.ToArray() ?? [],
            (long)point.Count,
            point.Sum,
            point.Min,
            point.Max);
    }
}
