namespace SummaryService.LoadTest.Baseline;

/// <summary>
/// Every (time, value) pair of one series, in fixed-size chunks so the store never copies what it
/// holds while growing; each chunk knows its time span, so a window reads only the chunks it overlaps.
/// </summary>
public sealed class RawSeries(string metric, IReadOnlyDictionary<string, string> labels)
{
    /// <summary>Pairs per chunk.</summary>
    public const int ChunkSize = 1 << 16;

    private readonly List<Chunk> _chunks = [];
    private readonly object _gate = new();

    /// <summary>Metric name.</summary>
    public string Metric { get; } = metric;

    /// <summary>Labels of the series.</summary>
    public IReadOnlyDictionary<string, string> Labels { get; } = labels;

    /// <summary>Appends values with one time each (<paramref name="times"/>) or one time for all.</summary>
    public void Append(ReadOnlySpan<double> values, ReadOnlySpan<long> times, long time)
    {
        lock (_gate)
        {
            int done = 0;
            while (done < values.Length)
            {
                if (_chunks.Count == 0 || _chunks[^1].Count == ChunkSize)
                {
                    _chunks.Add(new Chunk());
                }

                Chunk chunk = _chunks[^1];
                int run = Math.Min(values.Length - done, ChunkSize - chunk.Count);
                values.Slice(done, run).CopyTo(chunk.Values.AsSpan(chunk.Count));
                for (int i = 0; i < run; i++)
                {
                    long t = times.IsEmpty ? time : times[done + i];
                    chunk.Times[chunk.Count + i] = t;
                    chunk.From = Math.Min(chunk.From, t);
                    chunk.To = Math.Max(chunk.To, t);
                }

                chunk.Count += run;
                done += run;
            }
        }
    }

    /// <summary>Upper bound on the values in [from, to): the size of every chunk overlapping it.</summary>
    public long CountAtMost(long from, long to)
    {
        lock (_gate)
        {
            long count = 0;
            foreach (Chunk chunk in _chunks)
            {
                if (chunk.To >= from && chunk.From < to)
                {
                    count += chunk.Count;
                }
            }

            return count;
        }
    }

    /// <summary>Copies the values whose times lie in [from, to) into <paramref name="into"/>; returns how many.</summary>
    public int CopyWindow(long from, long to, Span<double> into)
    {
        lock (_gate)
        {
            int n = 0;
            foreach (Chunk chunk in _chunks)
            {
                if (chunk.To < from || chunk.From >= to)
                {
                    continue;
                }

                for (int i = 0; i < chunk.Count; i++)
                {
                    long t = chunk.Times[i];
                    if (t >= from && t < to)
                    {
                        into[n++] = chunk.Values[i];
                    }
                }
            }

            return n;
        }
    }

    private sealed class Chunk
    {
        public readonly long[] Times = new long[ChunkSize];
        public readonly double[] Values = new double[ChunkSize];
        public int Count;
        public long From = long.MaxValue;
        public long To = long.MinValue;
    }
}
