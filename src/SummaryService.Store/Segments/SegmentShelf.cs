using SummaryService.Store.Persistence;

namespace SummaryService.Store.Segments;

/// <summary>
/// The store's segment directory: writes new segments, opens them, and deletes each once no bucket
/// points into it any more. Also says which buckets are due to leave memory: closed buckets of the
/// first tier older than <see cref="SegmentOptions.HotSpan"/>, and closed buckets of every coarser
/// tier, cut at whole spans (<see cref="SegmentOptions.SpanMsFor"/>) so that segments come in a few
/// sizeable files rather than one per rollup pass. Snapshot generations list the segments they
/// hold in manifests (<see cref="SegmentManifest"/>); a file goes only once no bucket points into it
/// and no kept generation lists it.
/// </summary>
internal sealed class SegmentShelf : IDisposable
{
    private readonly IDataFiles _files;
    private readonly object _gate = new();
    private readonly HashSet<SegmentHandle> _open = [];
    private readonly Dictionary<ulong, HashSet<string>> _listed = [];
    private readonly List<SegmentManifestBuilder> _pending = [];
    private readonly HashSet<string> _reported = new(StringComparer.Ordinal);
    private long _nextNumber;

    public SegmentShelf(string directory, SegmentOptions options, IDataFiles files)
    {
        ArgumentNullException.ThrowIfNull(options);
        options.Validate();
        Directory = directory;
        Options = options;
        _files = files;
        System.IO.Directory.CreateDirectory(directory);
        _nextNumber = (long)System.IO.Directory.EnumerateFiles(directory, "*" + SegmentLayout.Extension).Select(p => SegmentLayout.NumberOf(Path.GetFileName(p))).DefaultIfEmpty(0ul).Max();
    }

    public string Directory { get; }

    public SegmentOptions Options { get; }

    /// <summary>
    /// Told once per damaged file (its name and what is wrong), the first time a read finds it so:
    /// every later query leaves its buckets out without saying so again.
    /// </summary>
    public Action<string, string>? Damaged { get; set; }

    /// <summary>Segments that still serve buckets.</summary>
    public IReadOnlyList<SegmentInfo> Open()
    {
        lock (_gate)
        {
            return [.. _open.Select(h => h.Reader.Info).OrderBy(i => i.FileName, StringComparer.Ordinal)];
        }
    }

    /// <summary>
    /// Buckets of tier <paramref name="tier"/> ending at or before this time leave memory. Coarse
    /// tiers leave in spans of <see cref="SegmentOptions.BucketsPerSpan"/> of their own buckets (an
    /// hourly tier in 60-hour spans), so every tier writes files of about the same number of buckets
    /// and 90 days of hourly buckets make a few dozen files per shard, not thousands.
    /// </summary>
    public long CutoffFor(int tier, long widthMs, long nowMs)
    {
        long edge = tier == 0 ? nowMs - Options.HotSpanMs : nowMs;
        return SeriesTimeline.AlignDown(edge, Options.SpanMsFor(widthMs));
    }

    /// <summary>
    /// At start-up, once the snapshot generation to load is known: opens the segments its manifest
    /// lists and hands each live bucket to <paramref name="place"/> (series key, tier, bucket), and
    /// each span lost earlier to <paramref name="lose"/>. Returns false with the reason when the
    /// manifest is damaged. A listed segment that cannot be opened is reported in
    /// <paramref name="report"/>; since its index is unreadable, which series it held is unknown,
    /// so its whole time range goes to <paramref name="loseShard"/> (its shard, as its name says).
    /// </summary>
    public bool TryRestore(ulong generation, RecoveryReport report, Action<SeriesKey, int, AgedBucket> place, Action<SeriesKey, LostSpan> lose, Action<int, LostSpan> loseShard, out string? problem)
    {
        ArgumentNullException.ThrowIfNull(report);
        if (!SegmentManifest.TryRead(Directory, generation, out var listed, out var lost, out problem))
        {
            return false;
        }

        foreach (var (key, span) in lost)
        {
            lose(key, span);
        }

        foreach (var (segment, spans) in lost.GroupBy(l => l.Span.Segment, StringComparer.Ordinal).Select(g => (g.Key, g.Count())))
        {
            report.Warnings.Add($"{spans} bucket spans lost earlier with damaged segment {segment} stay left out of answers");
        }

        foreach (var (name, live) in listed)
        {
            SegmentHandle handle;
            try
            {
                if (!string.Equals(Path.GetFileName(name), name, StringComparison.Ordinal))
                {
                    throw new SegmentDamagedException(name, "the manifest names it with a directory");
                }

                handle = new SegmentHandle(SegmentReader.Open(Path.Combine(Directory, name)), Retire, Report);
                if (handle.Reader.Buckets.Count != live.Length)
                {
                    handle.Reader.Dispose();
                    throw new SegmentDamagedException(name, $"it holds {handle.Reader.Buckets.Count} buckets, the manifest lists {live.Length}");
                }
            }
            catch (Exception ex) when (ex is SegmentDamagedException or IOException)
            {
                report.Warnings.Add($"aged buckets of segment {name} are missing: {ex.Message}");
                // A file of pre-merged blocks costs nothing: its blocks are built from their buckets again.
                if (SegmentLayout.TryParseName(name) is { } range && SegmentLayout.OfBlockTier(range.Tier) is null)
                {
                    loseShard(range.Shard, new LostSpan(range.Range, name));
                }

                continue;
            }

            lock (_gate)
            {
                _open.Add(handle);
            }

            foreach (BucketLocation bucket in handle.Reader.Buckets)
            {
                if (live[bucket.Ordinal])
                {
                    place(handle.Reader.Blocks[bucket.Block].Key, handle.Reader.Info.Tier, new AgedBucket(handle, bucket));
                }
            }

            handle.Settle();
        }

        Listed(generation, listed.Select(l => l.File));
        return true;
    }

    /// <summary>
    /// Keeps what the kept snapshot generations need and removes the rest: manifests of other
    /// generations, and segment files that no kept manifest lists and no bucket points into (what
    /// was written after the last snapshot is also in the log, which brings it back).
    /// </summary>
    public void KeepOnly(IReadOnlyCollection<ulong> generations)
    {
        foreach (ulong generation in generations)
        {
            if (!_listed.ContainsKey(generation) && SegmentManifest.TryRead(Directory, generation, out var listed, out _))
            {
                Listed(generation, listed.Select(l => l.File));
            }
        }

        HashSet<string> needed;
        lock (_gate)
        {
            foreach (ulong gone in _listed.Keys.Where(g => !generations.Contains(g)).ToArray())
            {
                _listed.Remove(gone);
            }

            needed = [.. _listed.Values.SelectMany(f => f), .. _open.Select(h => h.FileName)];
        }

        foreach (string path in System.IO.Directory.EnumerateFiles(Directory))
        {
            string name = Path.GetFileName(path);
            bool keep = SegmentManifest.GenerationOf(name) is { } g ? generations.Contains(g) : name.EndsWith(SegmentLayout.Extension, StringComparison.Ordinal) && needed.Contains(name);
            if (!keep)
            {
                _files.DeleteFile(path);
            }
        }
    }

    /// <summary>A manifest for a generation being written: filled under each shard's lock, written before the generation completes.</summary>
    public SegmentManifestBuilder BeginManifest()
    {
        var builder = new SegmentManifestBuilder();
        lock (_gate)
        {
            _pending.Add(builder);
        }

        return builder;
    }

    /// <summary>Writes <paramref name="manifest"/> as generation <paramref name="generation"/>'s.</summary>
    public void WriteManifest(ulong generation, SegmentManifestBuilder manifest)
    {
        ArgumentNullException.ThrowIfNull(manifest);
        var segments = manifest.Segments();
        SegmentManifest.Write(_files, Directory, generation, segments, manifest.Lost());
        Listed(generation, segments.Select(s => s.File));
        lock (_gate)
        {
            _pending.Remove(manifest);
        }
    }

    private void Listed(ulong generation, IEnumerable<string> files)
    {
        lock (_gate)
        {
            _listed[generation] = [.. files];
        }
    }

    /// <summary>Writes and opens a segment; the caller points buckets at it, then settles it.</summary>
    public SegmentHandle Write(SegmentWriter writer)
    {
        ArgumentNullException.ThrowIfNull(writer);
        SegmentInfo info = writer.WriteTo(_files, Directory, (ulong)Interlocked.Increment(ref _nextNumber));
        var handle = new SegmentHandle(SegmentReader.Open(Path.Combine(Directory, info.FileName)), Retire, Report);
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

    private void Report(SegmentDamagedException damage)
    {
        bool first;
        lock (_gate)
        {
            first = _reported.Add(damage.FileName);
        }

        if (first)
        {
            Damaged?.Invoke(damage.FileName, damage.Problem);
        }
    }

    // No bucket points here any more. A kept snapshot generation, or one being written, may still
    // list the file (a fallback if a newer one is damaged): then it goes when that one is pruned.
    private void Retire(SegmentHandle handle)
    {
        bool listed;
        lock (_gate)
        {
            if (!_open.Remove(handle))
            {
                return;
            }

            listed = _listed.Values.Any(f => f.Contains(handle.FileName)) || _pending.Exists(p => p.Holds(handle));
        }

        handle.Reader.Dispose();
        if (!listed)
        {
            _files.DeleteFile(handle.Reader.Path);
        }
    }
}
