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
    /// <summary>Joins equal neighbours of one time per value into runs.</summary>
    public static TimeRun[] Of(ReadOnlySpan<long> times)
    {
        var runs = new List<TimeRun>();
        int start = 0;
        for (int i = 1; i <= times.Length; i++)
        {
            if (i == times.Length || times[i] != times[start])
            {
                runs.Add(new TimeRun(times[start], i - start));
                start = i;
            }
        }

        return [.. runs];
    }
}
