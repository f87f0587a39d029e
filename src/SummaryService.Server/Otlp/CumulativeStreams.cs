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

/// <summary>How far a stream's later cumulative point is from its earlier one; false when the stream was reset (some total went down).</summary>
public delegate bool CumulativeDifference<T>(T earlier, T later, out T difference);

/// <summary>
/// Turns cumulative points (sums and exponential histograms) into differences per stream,
/// remembering each stream's last point. A reset is a new start time, or a difference the kind of
/// point cannot have (a monotonic sum below its last value, a histogram count that went down);
/// after a reset the point's whole value is the difference (the OpenTelemetry data model: a
/// cumulative point covers (start_time, time], and a new start time begins a new accumulation).
/// </summary>
/// <remarks>
/// A stream's first point counts only when the stream began after this server started listening
/// (its start time says so): otherwise its value holds what was sent before, perhaps to this server
/// before a restart, and is taken as the starting value. The memory is not persisted: after a restart
/// at most one interval per stream is missed, never counted twice.
/// </remarks>
public sealed class CumulativeStreams(ulong listeningSinceUnixNano, int capacity)
{
    private static readonly CumulativeDifference<double> s_anySum = (double earlier, double later, out double difference) =>
    {
        difference = later - earlier;
        return true;
    };

    private static readonly CumulativeDifference<double> s_monotonicSum = (double earlier, double later, out double difference) =>
    {
        difference = later - earlier;
        return later >= earlier;
    };

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

    /// <summary>The difference a sum's point makes to its stream, remembering the point.</summary>
    public (CumulativeOutcome Outcome, double Delta) Next(UInt128 stream, ulong startUnixNano, ulong timeUnixNano, double value, bool monotonic) =>
        Next(stream, startUnixNano, timeUnixNano, value, monotonic ? s_monotonicSum : s_anySum);

    /// <summary>
    /// The difference a point makes to its stream, remembering the point; the delta is meaningful
    /// only for <see cref="CumulativeOutcome.Delta"/>. A stream whose last point is of another kind
    /// (the metric changed type) starts again from this point.
    /// </summary>
    public (CumulativeOutcome Outcome, T? Delta) Next<T>(UInt128 stream, ulong startUnixNano, ulong timeUnixNano, T point, CumulativeDifference<T> since)
        where T : notnull
    {
        ArgumentNullException.ThrowIfNull(since);
        lock (_last)
        {
            if (!_last.TryGetValue(stream, out Last previous))
            {
                if (_last.Count >= capacity)
                {
                    return (CumulativeOutcome.Full, default);
                }

                _last[stream] = new Last(startUnixNano, timeUnixNano, point);
                return startUnixNano != 0 && startUnixNano >= listeningSinceUnixNano ? (CumulativeOutcome.Delta, point) : (CumulativeOutcome.Baseline, default);
            }

            bool restarted = startUnixNano != 0 && previous.Start != 0 && startUnixNano > previous.Start;
            bool older = (startUnixNano != 0 && previous.Start != 0 && startUnixNano < previous.Start) || (!restarted && timeUnixNano <= previous.Time);
            if (older)
            {
                return (CumulativeOutcome.Stale, default);
            }

            _last[stream] = new Last(startUnixNano, timeUnixNano, point);
            if (!restarted && previous.Point is T earlier && since(earlier, point, out T difference))
            {
                return (CumulativeOutcome.Delta, difference);
            }

            return (CumulativeOutcome.Delta, point);
        }
    }

    private readonly record struct Last(ulong Start, ulong Time, object Point);
}
