using SummaryService.Sketches;
using SummaryService.Sketches.Serialization;
using SummaryService.Store;

namespace SummaryService.Cluster.Partitions;

// What travels between nodes: plain copies of the store's records, sketches as their protobuf bytes
// (the same bytes snapshots hold), so the wire form never depends on the store's in-memory types.

/// <summary>A batch of values for one series.</summary>
[GenerateSerializer, Immutable, Alias("summary.partition.batch")]
public sealed record PartitionBatch(
    [property: Id(0)] string Metric,
    [property: Id(1)] Dictionary<string, string> Labels,
    [property: Id(2)] double[] Values,
    [property: Id(3)] long TimeUnixMs,
    [property: Id(4)] long[] ValueTimesUnixMs,
    [property: Id(5)] string Producer,
    [property: Id(6)] ulong Sequence)
{
    /// <summary>A copy of the batch (its values may live in a rented buffer the caller reuses).</summary>
    public static PartitionBatch From(SeriesBatch batch)
    {
        ArgumentNullException.ThrowIfNull(batch);
        return new(batch.Metric, new(batch.Labels, StringComparer.Ordinal), batch.Values.ToArray(), batch.TimeUnixMs, batch.ValueTimesUnixMs.ToArray(), batch.Producer, batch.Sequence);
    }

    /// <summary>The batch the partition's store takes.</summary>
    public SeriesBatch ToBatch() => new()
    {
        Metric = Metric,
        Labels = Labels,
        Values = Values,
        TimeUnixMs = TimeUnixMs,
        ValueTimesUnixMs = ValueTimesUnixMs,
        Producer = Producer,
        Sequence = Sequence,
    };
}

/// <summary>An uploaded sketch for one series.</summary>
[GenerateSerializer, Immutable, Alias("summary.partition.upload")]
public sealed record PartitionUpload(
    [property: Id(0)] string Metric,
    [property: Id(1)] Dictionary<string, string> Labels,
    [property: Id(2)] byte[] Sketch,
    [property: Id(3)] long TimeUnixMs,
    [property: Id(4)] string Producer,
    [property: Id(5)] ulong Sequence)
{
    /// <summary>A copy of the upload with its sketch encoded.</summary>
    public static PartitionUpload From(UploadedSketch upload)
    {
        ArgumentNullException.ThrowIfNull(upload);
        return new(upload.Metric, new(upload.Labels, StringComparer.Ordinal), SketchCodec.Serialize(upload.Sketch), upload.TimeUnixMs, upload.Producer, upload.Sequence);
    }

    /// <summary>The upload the partition's store takes.</summary>
    public UploadedSketch ToUpload() => new()
    {
        Metric = Metric,
        Labels = Labels,
        Sketch = SketchCodec.Deserialize(Sketch),
        TimeUnixMs = TimeUnixMs,
        Producer = Producer,
        Sequence = Sequence,
    };
}

/// <summary>One write for a partition: a batch of values or an uploaded sketch.</summary>
[GenerateSerializer, Immutable, Alias("summary.partition.write")]
public sealed record PartitionWrite([property: Id(0)] PartitionBatch? Batch, [property: Id(1)] PartitionUpload? Upload);

/// <summary>A refusal by the partition's store, carried back to be raised on the node that was called.</summary>
[GenerateSerializer, Immutable, Alias("summary.partition.rejection")]
public sealed record PartitionRejection([property: Id(0)] int Reason, [property: Id(1)] string Field, [property: Id(2)] string Message)
{
    /// <summary>The refusal as it travels.</summary>
    public static PartitionRejection From(StoreRejectedException rejection)
    {
        ArgumentNullException.ThrowIfNull(rejection);
        return new((int)rejection.Reason, rejection.Field, rejection.Message);
    }

    /// <summary>The refusal raised again, as the local store would have raised it.</summary>
    public StoreRejectedException ToException() => new((RejectReason)Reason, Field, Message);
}

/// <summary>Outcome of a write: its result, or the store's refusal.</summary>
[GenerateSerializer, Immutable, Alias("summary.partition.written")]
public sealed record PartitionWritten([property: Id(0)] long Accepted, [property: Id(1)] bool Duplicate, [property: Id(2)] PartitionRejection? Rejection)
{
    /// <summary>The result, or the refusal raised.</summary>
    public AppendResult Result() => Rejection is null ? new AppendResult(Accepted, Duplicate) : throw Rejection.ToException();
}

/// <summary>A window read: the selection, the window, the group-by labels, and the step (null: the window as one).</summary>
[GenerateSerializer, Immutable, Alias("summary.partition.read")]
public sealed record PartitionRead(
    [property: Id(0)] string Metric,
    [property: Id(1)] Dictionary<string, string> LabelEquals,
    [property: Id(2)] long FromUnixMs,
    [property: Id(3)] long ToUnixMs,
    [property: Id(4)] string[] GroupBy,
    [property: Id(5)] long? StepMs)
{
    /// <summary>The read of one window, or of its steps when <paramref name="stepMs"/> is given.</summary>
    public static PartitionRead Of(SeriesSelector selector, TimeWindow window, IReadOnlyList<string> groupBy, long? stepMs)
    {
        ArgumentNullException.ThrowIfNull(selector);
        ArgumentNullException.ThrowIfNull(groupBy);
        return new(selector.Metric, new(selector.LabelEquals, StringComparer.Ordinal), window.FromUnixMs, window.ToUnixMs, [.. groupBy], stepMs);
    }

    /// <summary>The selection.</summary>
    public SeriesSelector Selector() => new(Metric, LabelEquals);

    /// <summary>The window.</summary>
    public TimeWindow Window() => new(FromUnixMs, ToUnixMs);
}

/// <summary>One group of one window as a partition merged it.</summary>
[GenerateSerializer, Immutable, Alias("summary.partition.group")]
public sealed record PartitionGroup([property: Id(0)] Dictionary<string, string> Labels, [property: Id(1)] byte[] Sketch, [property: Id(2)] int SeriesMerged);

/// <summary>One window's groups and covered span as a partition answered it.</summary>
[GenerateSerializer, Immutable, Alias("summary.partition.window")]
public sealed record PartitionWindow([property: Id(0)] PartitionGroup[] Groups, [property: Id(1)] long CoveredFromUnixMs, [property: Id(2)] long CoveredToUnixMs)
{
    /// <summary>A window answer as it travels.</summary>
    public static PartitionWindow From(WindowSketches answer)
    {
        ArgumentNullException.ThrowIfNull(answer);
        var groups = answer.Groups.Select(g => new PartitionGroup(new(g.Labels, StringComparer.Ordinal), SketchCodec.Serialize(g.Sketch), g.SeriesMerged)).ToArray();
        return new(groups, answer.Covered.FromUnixMs, answer.Covered.ToUnixMs);
    }

    /// <summary>Span of the buckets the partition merged (or the window it was asked, when none overlapped).</summary>
    public TimeWindow Covered => new(CoveredFromUnixMs, CoveredToUnixMs);

    /// <summary>The groups' sketches decoded.</summary>
    public IEnumerable<(Dictionary<string, string> Labels, SeriesSketch Sketch, int SeriesMerged)> Decoded() =>
        Groups.Select(g => (g.Labels, SketchCodec.Deserialize(g.Sketch), g.SeriesMerged));
}

/// <summary>A read's answer: one window per step, or the store's refusal.</summary>
[GenerateSerializer, Immutable, Alias("summary.partition.answer")]
public sealed record PartitionAnswer([property: Id(0)] PartitionWindow[] Steps, [property: Id(1)] PartitionRejection? Rejection)
{
    /// <summary>The steps, or the refusal raised.</summary>
    public PartitionWindow[] Result() => Rejection is null ? Steps : throw Rejection.ToException();
}

/// <summary>A series in a partition's catalogue.</summary>
[GenerateSerializer, Immutable, Alias("summary.partition.series")]
public sealed record PartitionSeries(
    [property: Id(0)] string Metric,
    [property: Id(1)] Dictionary<string, string> Labels,
    [property: Id(2)] long Count,
    [property: Id(3)] long FromUnixMs,
    [property: Id(4)] long ToUnixMs,
    [property: Id(5)] int Buckets)
{
    /// <summary>A catalogue entry as it travels.</summary>
    public static PartitionSeries From(SeriesInfo info)
    {
        ArgumentNullException.ThrowIfNull(info);
        return new(info.Key.Metric, info.Key.Labels.ToDictionary(l => l.Key, l => l.Value, StringComparer.Ordinal), info.Count, info.Extent.FromUnixMs, info.Extent.ToUnixMs, info.Buckets);
    }

    /// <summary>The catalogue entry.</summary>
    public SeriesInfo ToInfo() => new(new SeriesKey(Metric, Labels), Count, new TimeWindow(FromUnixMs, ToUnixMs), Buckets);
}

/// <summary>A partition's store figures.</summary>
[GenerateSerializer, Immutable, Alias("summary.partition.figures")]
public sealed record PartitionFigures(
    [property: Id(0)] int Series,
    [property: Id(1)] long Buckets,
    [property: Id(2)] long EstimatedBytes,
    [property: Id(3)] long[] TierWidthTicks,
    [property: Id(4)] long[] TierBuckets,
    [property: Id(5)] long[] TierBytes,
    [property: Id(6)] int ProducerMarks,
    [property: Id(7)] string Node)
{
    /// <summary>A partition's figures as they travel, with the node that holds it.</summary>
    public static PartitionFigures From(StoreStats stats, string node)
    {
        ArgumentNullException.ThrowIfNull(stats);
        return new(stats.Series, stats.Buckets, stats.EstimatedBytes, [.. stats.Tiers.Select(t => t.BucketWidth.Ticks)], [.. stats.Tiers.Select(t => t.Buckets)], [.. stats.Tiers.Select(t => t.EstimatedBytes)], stats.ProducerMarks, node);
    }
}

/// <summary>One snapshot a partition wrote.</summary>
[GenerateSerializer, Immutable, Alias("summary.partition.snapshot")]
public sealed record PartitionSnapshot([property: Id(0)] ulong Generation, [property: Id(1)] int Series, [property: Id(2)] long Bytes, [property: Id(3)] TimeSpan Elapsed);
