using SummaryService.Sketches;

namespace SummaryService.Store.Segments;

/// <summary>
/// One open segment and how many buckets of the store still point into it. A bucket that is read
/// back into memory (a late value, a rollup) or dropped by retention lets go of its reference; when
/// the last one goes, the file has nothing left to serve and is deleted — that is how rollup
/// retires segments and retention removes whole files.
/// </summary>
internal sealed class SegmentHandle(SegmentReader reader, Action<SegmentHandle> retire, Action<SegmentDamagedException> damaged)
{
    private int _references;
    private int _settled;

    public SegmentReader Reader { get; } = reader;

    public string FileName => Reader.Info.FileName;

    /// <summary>Buckets still pointing here.</summary>
    public int References => Volatile.Read(ref _references);

    public void AddReference() => Interlocked.Increment(ref _references);

    /// <summary>Tells the shelf a read of this segment failed its checks (it reports each file once).</summary>
    public void ReportDamage(SegmentDamagedException damage) => damaged(damage);

    public void Release()
    {
        if (Interlocked.Decrement(ref _references) == 0 && Volatile.Read(ref _settled) == 1)
        {
            retire(this);
        }
    }

    /// <summary>Called once every bucket that was going to point here does: from now on the last release retires the file.</summary>
    public void Settle()
    {
        Volatile.Write(ref _settled, 1);
        if (References == 0)
        {
            retire(this);
        }
    }
}

/// <summary>A bucket that lives in a segment: the file and where in it.</summary>
internal readonly record struct AgedBucket(SegmentHandle Segment, BucketLocation Location)
{
    /// <summary>A fresh sketch of the bucket, read from the mapping.</summary>
    /// <exception cref="SegmentDamagedException">Its block fails its checksum or the bucket cannot be decoded.</exception>
    public SeriesSketch Load() => Segment.Reader.ReadBucket(Location);
}

/// <summary>A span of a series whose aged buckets could not be read: left out of every answer since.</summary>
/// <param name="Range">The bucket's span.</param>
/// <param name="Segment">The damaged segment's file name.</param>
internal readonly record struct LostSpan(TimeWindow Range, string Segment);
