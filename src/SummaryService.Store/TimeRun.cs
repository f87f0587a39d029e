namespace SummaryService.Store;

/// <summary>
/// A batch's resolved timestamps as runs of equal neighbours, in value order. Most batches carry
/// one time for all their values and so are one run: the append path then holds and walks one
/// entry per run, not one per value.
/// </summary>
/// <param name="TimeUnixMs">The time every value of the run has.</param>
/// <param name="Count">How many consecutive values have it (at least one).</param>
internal readonly record struct TimeRun(long TimeUnixMs, int Count)
{
    /// <summary>Joins equal neighbours of one time per value into runs; each run's end is found by a vectorized scan.</summary>
    public static TimeRun[] Of(ReadOnlySpan<long> times)
    {
        var runs = new List<TimeRun>();
        for (int start = 0; start < times.Length;)
        {
            int other = times[(start + 1)..].IndexOfAnyExcept(times[start]);
            int count = other < 0 ? times.Length - start : other + 1;
            runs.Add(new TimeRun(times[start], count));
            start += count;
        }

        return [.. runs];
    }
}
