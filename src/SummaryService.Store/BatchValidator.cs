using SummaryService.Readable;
using SummaryService.Sketches;

namespace SummaryService.Store;

/// <summary>Checks a batch completely before any of it is applied, so a rejected batch changes nothing.</summary>
internal sealed class BatchValidator(StoreOptions options)
{
    /// <summary>Resolves every value's timestamp, as runs of equal neighbours, checking names, labels, values and times.</summary>
    public TimeRun[] Validate(SeriesBatch batch, long nowMs)
    {
        ValidateName(batch.Metric);
        if (batch.Labels.Count > options.MaxLabels)
        {
            throw new StoreRejectedException(RejectReason.TooManyLabels, "labels", $"labels has {batch.Labels.Count} entries; at most {options.MaxLabels} are allowed.");
        }

        foreach (var (name, value) in batch.Labels)
        {
            ValidateLabel(name, value);
        }

        ReadOnlySpan<double> values = batch.Values.Span;
        if (values.Length == 0 || values.Length > options.MaxValuesPerBatch)
        {
            throw new StoreRejectedException(RejectReason.InvalidBatchSize, "values", $"values has {values.Length} entries; a batch carries 1 to {options.MaxValuesPerBatch}.");
        }

        int bad = FiniteValues.IndexOfNonFinite(values);
        if (bad >= 0)
        {
            throw new StoreRejectedException(RejectReason.NonFiniteValue, $"values[{bad}]", $"values[{bad}] is {values[bad]}; values must be finite numbers.");
        }

        ReadOnlySpan<long> perValue = batch.ValueTimesUnixMs.Span;
        if (perValue.Length != 0 && perValue.Length != values.Length)
        {
            throw new StoreRejectedException(RejectReason.InvalidBatchSize, "value_times_unix_ms", $"value_times_unix_ms has {perValue.Length} entries for {values.Length} values; give one per value or none.");
        }

        long oldest = nowMs - options.TotalRetentionMs;
        long newest = nowMs + (long)options.MaxFuture.TotalMilliseconds;
        if (perValue.Length == 0)
        {
            return [new TimeRun(Checked(batch.TimeUnixMs, nowMs, oldest, newest, perValueTimes: 0, 0), values.Length)];
        }

        // Checked once per run of equal times, as batches arrive, not once per value; a time of 0
        // resolves to now, so a run of 0 beside a run of now's time joins it.
        var runs = new List<TimeRun>();
        int first = 0;
        foreach (TimeRun run in TimeRun.Of(perValue))
        {
            long t = Checked(run.TimeUnixMs, nowMs, oldest, newest, perValue.Length, first);
            first += run.Count;
            if (runs.Count > 0 && runs[^1].TimeUnixMs == t)
            {
                runs[^1] = runs[^1] with { Count = runs[^1].Count + run.Count };
            }
            else
            {
                runs.Add(run with { TimeUnixMs = t });
            }
        }

        return [.. runs];
    }

    // A time of 0 means "now"; anything past retention or too far ahead refuses the whole batch.
    private long Checked(long raw, long nowMs, long oldest, long newest, int perValueTimes, int index)
    {
        long t = raw == 0 ? nowMs : raw;
        if (t < oldest)
        {
            string field = TimeField(perValueTimes, index);
            throw new StoreRejectedException(RejectReason.TooOld, field, $"{field} is {TimeText.IsoAndUnixMs(t)}, older than the retention limit {TimeText.IsoAndUnixMs(oldest)} ({DurationText.Format(TimeSpan.FromMilliseconds(options.TotalRetentionMs))} before now).");
        }

        if (t > newest)
        {
            string field = TimeField(perValueTimes, index);
            throw new StoreRejectedException(RejectReason.TooFarInFuture, field, $"{field} is {TimeText.IsoAndUnixMs(t)}, more than {DurationText.Format(options.MaxFuture)} ahead of the store's clock ({TimeText.IsoAndUnixMs(nowMs)}).");
        }

        return t;
    }

    // Named only when a value is refused, so accepted batches format no per-value strings.
    private static string TimeField(int perValueTimes, int index) =>
        perValueTimes == 0 ? "time_unix_ms" : $"value_times_unix_ms[{index}]";

    private void ValidateName(string metric)
    {
        if (string.IsNullOrEmpty(metric) || metric.Length > options.MaxMetricLength || !IsName(metric, allowDot: true))
        {
            throw new StoreRejectedException(RejectReason.InvalidMetric, "metric", $"metric '{metric}' is invalid: use 1 to {options.MaxMetricLength} characters from letters, digits, '_', '-', '.', ':' and '/', starting with a letter.");
        }
    }

    private void ValidateLabel(string name, string value)
    {
        if (string.IsNullOrEmpty(name) || name.Length > options.MaxLabelLength || !IsName(name, allowDot: false))
        {
            throw new StoreRejectedException(RejectReason.InvalidLabel, $"labels[{name}]", $"label name '{name}' is invalid: use 1 to {options.MaxLabelLength} letters, digits or '_', starting with a letter or '_'.");
        }

        if (value is null || value.Length == 0 || value.Length > options.MaxLabelLength || value.Any(char.IsControl))
        {
            throw new StoreRejectedException(RejectReason.InvalidLabel, $"labels[{name}]", $"label '{name}' has value '{value}'; values are 1 to {options.MaxLabelLength} printable characters.");
        }
    }

    private static bool IsName(string text, bool allowDot)
    {
        if (!(char.IsAsciiLetter(text[0]) || (!allowDot && text[0] == '_')))
        {
            return false;
        }

        foreach (char c in text)
        {
            bool ok = char.IsAsciiLetterOrDigit(c) || c == '_' || (allowDot && (c is '.' or '-' or ':' or '/'));
            if (!ok)
            {
                return false;
            }
        }

        return true;
    }
}
