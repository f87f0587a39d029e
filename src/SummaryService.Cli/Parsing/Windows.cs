using Google.Protobuf.WellKnownTypes;
using SummaryService.Contract.V1;

namespace SummaryService.Cli.Parsing;

/// <summary>Builds contract windows, refusing empty or reversed ranges before the server has to.</summary>
public static class Windows
{
    /// <summary>The trailing window of this length.</summary>
    public static Window Last(TimeSpan last) => new() { Last = Duration.FromTimeSpan(last) };

    /// <summary>The half-open range [from, to), or an error naming <paramref name="what"/>.</summary>
    public static bool TryRange(long fromMs, long toMs, string what, out Window window, out string error)
    {
        window = new Window();
        error = "";
        if (fromMs >= toMs)
        {
            error = $"'{what}' starts at {TimePoint.Format(fromMs)}, not before its end {TimePoint.Format(toMs)}.";
            return false;
        }

        window = new Window { Range = new TimeRange { FromUnixMs = fromMs, ToUnixMs = toMs } };
        return true;
    }
}
