using SummaryService.Sketches;

namespace SummaryService.Client.Recording;

/// <summary>
/// One series' sketches under <see cref="UploadForm.Sketches"/>, one per flush interval aligned to
/// the Unix epoch, each value folded into the interval of its record time. An upload places its whole
/// sketch in the server bucket holding the interval's start, so with an interval that divides the
/// server's bucket width every value lands in the bucket its own timestamp belongs to.
/// </summary>
internal sealed class IntervalSketches(SeriesSketchOptions options, long intervalMs)
{
    private readonly object _gate = new();
    private readonly List<(long Start, SeriesSketch Sketch)> _open = [];

    /// <summary>Folds a sealed chunk's values in; one lock per chunk, not per value.</summary>
    public void Fold(ValueChunk chunk, int count)
    {
        lock (_gate)
        {
            long lastStart = long.MinValue;
            SeriesSketch? last = null;
            for (int i = 0; i < count; i++)
            {
                long start = StartOf(chunk.Times[i]);
                if (start != lastStart || last is null)
                {
                    last = Find(start);
                    lastStart = start;
                }

                last.Add(chunk.Values[i]);
            }
        }
    }

    /// <summary>Moves out the sketches whose interval has ended by <paramref name="nowUnixMs"/>, or all of them.</summary>
    public void TakeDue(long nowUnixMs, bool everything, List<(long Start, SeriesSketch Sketch)> into)
    {
        lock (_gate)
        {
            for (int i = _open.Count - 1; i >= 0; i--)
            {
                if (everything || _open[i].Start + intervalMs <= nowUnixMs)
                {
                    into.Add(_open[i]);
                    _open.RemoveAt(i);
                }
            }
        }
    }

    private long StartOf(long timeUnixMs) => timeUnixMs - (((timeUnixMs % intervalMs) + intervalMs) % intervalMs);

    private SeriesSketch Find(long start)
    {
        foreach (var (openStart, sketch) in _open)
        {
            if (openStart == start)
            {
                return sketch;
            }
        }

        var created = new SeriesSketch(options);
        _open.Add((start, created));
        return created;
    }
}
