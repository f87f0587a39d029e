namespace SummaryService.Server.Otlp;

/// <summary>What became of one cumulative point.</summary>
public enum CumulativeOutcome
{
    /// <summary>The point gave a difference to record.</summary>
    Delta,

    /// <summary>The first point seen of a stream that began before this server listened: it is the starting value, nothing is recorded.</summary>
    Baseline,

    /// <summary>The point is not newer than the stream's last one (a resent or reordered export): nothing is recorded.</summary>
    Stale,

    /// <summary>The stream is new and no more streams can be remembered: nothing is recorded.</summary>
    Full,
}

/// <summary>
/// Turns cumulative sums into differences per stream, remembering each stream's last point. A reset
/// is a new start time, or, for a monotonic sum, a value below the last one; after a reset the point's
/// whole value is the difference (the OpenTelemetry data model: a cumulative point covers
/// (start_time, time], and a new start time begins a new accumulation).
/// </summary>
/// <remarks>
/// A stream's first point counts only when the stream began after this server started listening
/// (its start time says so): otherwise its value holds what was sent before, perhaps to this server
/// before a restart, and is taken as the starting value. The memory is not persisted: after a restart
/// at most one interval per stream is missed, never counted twice.
/// </remarks>
public sealed class CumulativeStreams(ulong listeningSinceUnixNano, int capacity)
{
    private readonly Dictionary<UInt128, Last> _last = [];

    /// <summary>Streams remembered.</summary>
    public int Count
    {
        get
        {
            lock (_last)
            {
                return _last.Count;
            }
        }
    }

    /// <summary>The difference a point makes to its stream, remembering the point.</summary>
    public (CumulativeOutcome Outcome, double Delta) Next(UInt128 stream, ulong startUnixNano, ulong timeUnixNano, double value, bool monotonic)
    {
        lock (_last)
        {
            if (!_last.TryGetValue(stream, out Last previous))
            {
                if (_last.Count >= capacity)
                {
                    return (CumulativeOutcome.Full, 0);
                }

                _last[stream] = new Last(startUnixNano, timeUnixNano, value);
                return startUnixNano != 0 && startUnixNano >= listeningSinceUnixNano ? (CumulativeOutcome.Delta, value) : (CumulativeOutcome.Baseline, 0);
            }

            bool restarted = startUnixNano != 0 && previous.Start != 0 && startUnixNano > previous.Start;
            bool older = (startUnixNano != 0 && previous.Start != 0 && startUnixNano < previous.Start) || (!restarted && timeUnixNano <= previous.Time);
            if (older)
            {
                return (CumulativeOutcome.Stale, 0);
            }

            _last[stream] = new Last(startUnixNano, timeUnixNano, value);
            bool dropped = monotonic && value < previous.Value;
            return restarted || dropped ? (CumulativeOutcome.Delta, value) : (CumulativeOutcome.Delta, value - previous.Value);
        }
    }

    private readonly record struct Last(ulong Start, ulong Time, double Value);
}
