using SummaryService.Readable;
using SummaryService.Contract.V1;
using SummaryService.Store;
using Domain = SummaryService.Sketches.Summaries;

namespace SummaryService.Server.Validation;

/// <summary>
/// Checks query messages field by field and turns them into store arguments. Every refusal is
/// InvalidArgument with the proto field's path and the offending value, before the store is asked.
/// </summary>
public static class QueryRequests
{
    /// <summary>The selector, which must name a metric.</summary>
    public static SeriesSelector SelectorOf(Selector? selector, string field)
    {
        if (selector is null || string.IsNullOrEmpty(selector.Metric))
        {
            throw RpcErrors.Invalid($"{field}.metric", $"{field}.metric is empty; name the metric to read.");
        }

        return new SeriesSelector(selector.Metric, new Dictionary<string, string>(selector.LabelEquals, StringComparer.Ordinal));
    }

    /// <summary>The window as a half-open range, measuring <c>last</c> back from <paramref name="nowMs"/>.</summary>
    public static TimeWindow WindowOf(Window? window, string field, long nowMs)
    {
        switch (window?.SpanCase)
        {
            case Window.SpanOneofCase.Range:
                var range = window.Range;
                if (range.FromUnixMs >= range.ToUnixMs)
                {
                    throw RpcErrors.Invalid($"{field}.range", $"{field}.range from_unix_ms {TimeText.IsoAndUnixMs(range.FromUnixMs)} is not before to_unix_ms {TimeText.IsoAndUnixMs(range.ToUnixMs)}; windows are half-open [from, to).");
                }

                return new TimeWindow(range.FromUnixMs, range.ToUnixMs);
            case Window.SpanOneofCase.Last:
                TimeSpan last = DurationOf(window.Last, $"{field}.last");
                if (last <= TimeSpan.Zero)
                {
                    throw RpcErrors.Invalid($"{field}.last", $"{field}.last is {DurationText.Format(last)}; it must be positive.");
                }

                return new TimeWindow(nowMs - (long)last.TotalMilliseconds, nowMs);
            default:
                throw RpcErrors.Invalid(field, $"{field} is missing; give a range or a trailing duration (last).");
        }
    }

    /// <summary>A length in milliseconds in the shared duration syntax, or in plain milliseconds past what a duration holds.</summary>
    public static string LengthText(Int128 milliseconds) =>
        milliseconds >= 0 && milliseconds <= TimeSpan.MaxValue.Ticks / TimeSpan.TicksPerMillisecond
            ? DurationText.Format(TimeSpan.FromMilliseconds((long)milliseconds))
            : $"{milliseconds} ms";

    /// <summary>A duration that must be a valid protobuf duration.</summary>
    public static TimeSpan DurationOf(Google.Protobuf.WellKnownTypes.Duration duration, string field)
    {
        ArgumentNullException.ThrowIfNull(duration);
        // The protobuf rules: both parts in range and of one sign (ToTimeSpan throws otherwise).
        if (duration.Seconds is < -315_576_000_000 or > 315_576_000_000 || duration.Nanos is <= -1_000_000_000 or >= 1_000_000_000 || Math.Sign(duration.Seconds) * Math.Sign(duration.Nanos) == -1)
        {
            throw RpcErrors.Invalid(field, $"{field} ({duration.Seconds} s, {duration.Nanos} ns) is not a valid duration: seconds and nanos must lie in range and share one sign.");
        }

        return duration.ToTimeSpan();
    }

    /// <summary>Summary options with the request's quantiles, confidence, thresholds, modes and histogram.</summary>
    public static Domain.SummaryOptions OptionsOf(IReadOnlyList<double> quantiles, double confidence, IReadOnlyList<double> rankOf, uint maxModes, HistogramSpec? histogram, IReadOnlyList<double>? defaultQuantiles = null)
    {
        ArgumentNullException.ThrowIfNull(quantiles);
        ArgumentNullException.ThrowIfNull(rankOf);
        for (int i = 0; i < quantiles.Count; i++)
        {
            if (!(quantiles[i] >= 0 && quantiles[i] <= 1))
            {
                throw RpcErrors.Invalid($"quantiles[{i}]", $"quantiles[{i}] is {quantiles[i]}; quantiles must lie in [0, 1].");
            }
        }

        if (confidence != 0 && !(confidence > 0 && confidence < 1))
        {
            throw RpcErrors.Invalid("confidence", $"confidence is {confidence}; it must lie strictly between 0 and 1 (0 means {Domain.SummaryOptions.DefaultConfidence}).");
        }

        for (int i = 0; i < rankOf.Count; i++)
        {
            if (!double.IsFinite(rankOf[i]))
            {
                throw RpcErrors.Invalid($"rank_of[{i}]", $"rank_of[{i}] is {rankOf[i]}; thresholds must be finite.");
            }
        }

        if (maxModes > QueryDefaults.MaxModes)
        {
            throw RpcErrors.Invalid("max_modes", $"max_modes is {maxModes}; at most {QueryDefaults.MaxModes} modes are listed.");
        }

        return new Domain.SummaryOptions
        {
            Quantiles = quantiles.Count == 0 ? defaultQuantiles ?? Domain.SummaryOptions.DefaultQuantiles : quantiles.ToArray(),
            Confidence = confidence == 0 ? Domain.SummaryOptions.DefaultConfidence : confidence,
            RankOf = rankOf.ToArray(),
            MaxModes = maxModes == 0 ? Domain.SummaryOptions.DefaultMaxModes : (int)maxModes,
            Histogram = histogram is null ? null : HistogramOf(histogram),
        };
    }

    private static Domain.HistogramSpec HistogramOf(HistogramSpec spec)
    {
        for (int i = 0; i < spec.Edges.Count; i++)
        {
            if (!double.IsFinite(spec.Edges[i]) || (i > 0 && !(spec.Edges[i] > spec.Edges[i - 1])))
            {
                throw RpcErrors.Invalid($"histogram.edges[{i}]", $"histogram.edges[{i}] is {spec.Edges[i]}; edges must be finite and strictly ascending.");
            }
        }

        if (spec.Edges.Count == 1)
        {
            throw RpcErrors.Invalid("histogram.edges", "histogram.edges has one edge; give at least two, or none for equal-width bins.");
        }

        if (spec.BinCount > QueryDefaults.MaxHistogramBins)
        {
            throw RpcErrors.Invalid("histogram.bin_count", $"histogram.bin_count is {spec.BinCount}; at most {QueryDefaults.MaxHistogramBins} bins.");
        }

        if (spec.LogBuckets && spec.Edges.Count > 0)
        {
            throw RpcErrors.Invalid("histogram.log_buckets", $"histogram.log_buckets is set with {spec.Edges.Count} edges; bins that follow the log buckets take no edges.");
        }

        int bins = spec.BinCount == 0 ? Domain.HistogramSpec.DefaultBinCount : (int)spec.BinCount;
        return spec.Edges.Count > 0 ? Domain.HistogramSpec.WithEdges(spec.Edges.ToArray())
            : spec.LogBuckets ? Domain.HistogramSpec.LogScaled(bins)
            : Domain.HistogramSpec.Automatic(bins);
    }
}
