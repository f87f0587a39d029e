using Google.Protobuf.WellKnownTypes;
using SummaryService.Readable;
using SummaryService.Contract.V1;
using SummaryService.Server.Configuration;
using SummaryService.Sketches.Summaries;
using SummaryService.Store;

namespace SummaryService.Server.Validation;

/// <summary>
/// Checks the parts of query requests beyond selector and window (group-by labels, summary
/// options, timeline steps, watch intervals) and fills in their defaults, each named in
/// <see cref="QueryDefaults"/> or <see cref="ServerSettings"/>. Every refusal is InvalidArgument
/// naming the field and its value, before the store is asked.
/// </summary>
public static class QueryShapes
{
    /// <summary>The group-by labels and summary options of a summarize request.</summary>
    public static (string[] GroupBy, SummaryOptions Options) Of(SummarizeRequest request)
    {
        ArgumentNullException.ThrowIfNull(request);
        return (GroupByOf(request.GroupBy), QueryRequests.OptionsOf(request.Quantiles, request.Confidence, request.RankOf, request.MaxModes, request.Histogram));
    }

    /// <summary>Group-by labels: each named once, none empty.</summary>
    public static string[] GroupByOf(IReadOnlyList<string> groupBy)
    {
        ArgumentNullException.ThrowIfNull(groupBy);
        for (int i = 0; i < groupBy.Count; i++)
        {
            if (string.IsNullOrEmpty(groupBy[i]))
            {
                throw RpcErrors.Invalid($"group_by[{i}]", $"group_by[{i}] is empty; name a label.");
            }

            for (int j = 0; j < i; j++)
            {
                if (string.Equals(groupBy[i], groupBy[j], StringComparison.Ordinal))
                {
                    throw RpcErrors.Invalid($"group_by[{i}]", $"group_by[{i}] '{groupBy[i]}' repeats group_by[{j}].");
                }
            }
        }

        return [.. groupBy];
    }

    /// <summary>A timeline's step in ms: present, at least 1 ms, and cutting the window into no more than <paramref name="maxSteps"/> steps.</summary>
    public static long StepOf(Duration? step, TimeWindow window, int maxSteps)
    {
        if (step is null)
        {
            throw RpcErrors.Invalid("step", "step is missing; give the width of each step.");
        }

        long stepMs = (long)QueryRequests.DurationOf(step, "step").TotalMilliseconds;
        if (stepMs < 1)
        {
            throw RpcErrors.Invalid("step", $"step is {DurationText.Format(step.ToTimeSpan())}; it must be at least 1ms.");
        }

        // In 128 bits: a window from near the start of 64-bit time to now is longer than a long holds.
        Int128 length = (Int128)window.ToUnixMs - window.FromUnixMs;
        Int128 steps = (length + stepMs - 1) / stepMs;
        if (steps > maxSteps)
        {
            throw RpcErrors.Invalid("step", $"step {DurationText.Format(step.ToTimeSpan())} cuts the window of {QueryRequests.LengthText(length)} into {steps} steps; at most {maxSteps} are allowed.");
        }

        return stepMs;
    }

    /// <summary>A watch's interval: the configured default when absent or zero, never under the configured minimum.</summary>
    public static TimeSpan WatchIntervalOf(Duration? interval, ServerSettings settings)
    {
        ArgumentNullException.ThrowIfNull(settings);
        TimeSpan given = interval is null ? TimeSpan.Zero : QueryRequests.DurationOf(interval, "interval");
        if (given == TimeSpan.Zero)
        {
            return settings.WatchInterval;
        }

        if (given < settings.WatchMinInterval)
        {
            throw RpcErrors.Invalid("interval", $"interval is {DurationText.Format(given)}; it must be at least {settings.WatchMinInterval}.");
        }

        return given;
    }
}
