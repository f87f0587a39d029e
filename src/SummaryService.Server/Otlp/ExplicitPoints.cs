using SummaryService.Contract.Otlp.Metrics;
using SummaryService.Sketches.Buckets;

namespace SummaryService.Server.Otlp;

/// <summary>Explicit-bounds histogram points: what makes one unusable, and its values.</summary>
public static class ExplicitPoints
{
    /// <summary>
    /// Why the point cannot be kept, naming the field as <paramref name="path"/> leads to it, or null
    /// when it can: edges finite and strictly increasing, one count more than edges, counts adding
    /// up to count, sum, min and max present and finite (the moments need all three; the SDKs record
    /// them by default), min and max in the lowest and highest occupied buckets.
    /// </summary>
    public static string? Invalid(HistogramDataPoint point, string path)
    {
        ArgumentNullException.ThrowIfNull(point);
        if (EdgeBucketSketch.Invalid(point.ExplicitBounds, point.BucketCounts, $"{path}.explicit_bounds", $"{path}.bucket_counts") is { } reason)
        {
            return reason;
        }

        ulong total = 0;
        foreach (ulong count in point.BucketCounts)
        {
            total += count;
        }

        if (total != point.Count)
        {
            return $"{path}.count is {point.Count} but bucket_counts add up to {total}";
        }

        foreach (var (name, has, value) in new[] { ("sum", point.HasSum, point.Sum), ("min", point.HasMin, point.Min), ("max", point.HasMax, point.Max) })
        {
            if (point.Count > 0 && !has)
            {
                return $"{path}.{name} is absent; the moments need sum, min and max (the SDKs record them by default)";
            }

            if (has && !double.IsFinite(value))
            {
                return $"{path}.{name} is {value}; it must be finite";
            }
        }

        if (point.Count > 0 && point.Min > point.Max)
        {
            return $"{path}.min is {point.Min}, above max {point.Max}";
        }

        return PointOf(point).ExtremesOutsideBuckets() is { } outside ? $"{path}: its {outside}" : null;
    }

    /// <summary>The values of a valid point, with its edges and counts copied (a cumulative stream keeps them past the request).</summary>
    public static EdgeHistogramPoint PointOf(HistogramDataPoint point)
    {
        ArgumentNullException.ThrowIfNull(point);
        return new([.. point.ExplicitBounds], [.. point.BucketCounts], (long)point.Count, point.Sum, point.Min, point.Max);
    }
}
