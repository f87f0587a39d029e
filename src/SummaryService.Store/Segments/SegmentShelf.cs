using SummaryService.Store.Persistence;

namespace SummaryService.Store.Segments;

/// <summary>
/// The store's segment directory: writes new segments, opens them, and deletes each once no bucket
/// points into it any more. Also says which buckets are due to leave memory: closed buckets of the
/// first tier older than <see cref="SegmentOptions.HotSpan"/>, and closed buckets of every coarser
/// tier, cut at whole <see cref="SegmentOptions.SegmentSpan"/>s so that segments come in a few
/// sizeable files rather than one per rollup pass.
/// </summary>
internal sealed class SegmentShelf : IDisposable
{
    private readonly IDataFiles _files;
    private readonly object _gate = new();
    private readonly HashSet<SegmentHandle> _open = [];
    private long _nextNumber;

    public SegmentShelf(string directory, SegmentOptions options, IDataFiles files)
    {
        ArgumentNullException.ThrowIfNull(options);
        options.Validate();
        Directory = directory;
        Options = options;
        _files = files;
        System.IO.Directory.CreateDirectory(directory);
    }

    public string Directory { get; }

    public SegmentOptions Options { get; }

    /// <summary>Segments that still serve buckets.</summary>
    public IReadOnlyList<SegmentInfo> Open()
    {
        lock (_gate)
        {
            return [.. _open.Select(h => h.Reader.Info).OrderBy(i => i.FileName, StringComparer.Ordinal)];
        }
    }

    /// <summary>Buckets of tier <paramref name="tier"/> ending at or before this time leave memory.</summary>
    public long CutoffFor(int tier, long nowMs)
    {
        long edge = tier == 0 ? nowMs - Options.HotSpanMs : nowMs;
        return SeriesTimeline.AlignDown(edge, Options.SegmentSpanMs);
    }

    /// <summary>
    /// Removes every segment file in the directory: at start-up, while snapshots still hold every
    /// bucket whole, what is there is a copy of what the snapshot and the log bring back.
    /// </summary>
    public void Clear()
    {
        foreach (string path in System.IO.Directory.EnumerateFiles(Directory))
        {
            if (path.EndsWith(SegmentLayout.Extension, StringComparison.Ordinal) || path.EndsWith(SegmentLayout.PartialExtension, StringComparison.Ordinal))
            {
                _files.DeleteFile(path);
            }
        }
    }

    /// <summary>Writes and opens a segment; the caller points buckets at it, then settles it.</summary>
    public SegmentHandle Write(SegmentWriter writer)
    {
        ArgumentNullException.ThrowIfNull(writer);
        SegmentInfo info = writer.WriteTo(_files, Directory, (ulong)Interlocked.Increment(ref _nextNumber));
        var handle = new SegmentHandle(SegmentReader.Open(Path.Combine(Directory, info.FileName)), Retire);
        lock (_gate)
        {
            _open.Add(handle);
        }

        return handle;
    }

    public void Dispose()
    {
        lock (_gate)
        {
            foreach (SegmentHandle handle in _open)
            {
                handle.Reader.Dispose();
            }

            _open.Clear();
        }
    }

    private void Retire(SegmentHandle handle)
    {
        lock (_gate)
        {
            if (!_open.Remove(handle))
            {
                return;
            }
        }

        handle.Reader.Dispose();
        _files.DeleteFile(handle.Reader.Path);
    }
}
