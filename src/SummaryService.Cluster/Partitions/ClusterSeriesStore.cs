using SummaryService.Sketches;
using SummaryService.Store;
using SummaryService.Store.Persistence;

namespace SummaryService.Cluster.Partitions;

/// <summary>
/// The store seam over the cluster's partitions: a write goes to the partition that owns its
/// series; a read goes to every partition, each of which merges its own series per group, and the
/// groups are merged here — so <see cref="StoreSummaries"/> answers from the same merged sketches as
/// on one node. Upkeep calls reach every partition; the partitions also run their own on timers.
/// </summary>
public sealed class ClusterSeriesStore(PartitionFanOut partitions, SeriesSketchOptions sketch, DurabilityMode durability) : ISeriesStore, IStoreMaintenance
{
    // A window read widens to whole buckets in every partition; it settles within a few rounds
    // (one per coarser tier at most), so this bound is never reached by a consistent store.
    private const int MaxWideningRounds = 32;

    private readonly PartitionWriteQueue[] _writes = [.. Enumerable.Range(0, partitions.Map.Count).Select(p => new PartitionWriteQueue(partitions, p))];

    /// <inheritdoc/>
    public DurabilityMode Durability => durability;

    /// <summary>Always null: a partition that cannot write refuses its own writes, with Unavailable naming it.</summary>
    public string? WriteTrouble => null;

    /// <summary>Always null: each partition logs its own snapshot trouble and retries on its timer.</summary>
    public string? SnapshotTrouble => null;

    /// <inheritdoc/>
    public async ValueTask<AppendResult> AppendAsync(SeriesBatch batch, CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(batch);
        int owner = partitions.Map.Of(new SeriesKey(batch.Metric, batch.Labels));
        PartitionWritten written = await _writes[owner].SendAsync(new PartitionWrite(PartitionBatch.From(batch), null), cancellationToken).ConfigureAwait(false);
        return written.Result();
    }

    /// <inheritdoc/>
    public async ValueTask<AppendResult> MergeSketchAsync(UploadedSketch upload, CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(upload);
        int owner = partitions.Map.Of(new SeriesKey(upload.Metric, upload.Labels));
        PartitionWritten written = await _writes[owner].SendAsync(new PartitionWrite(null, PartitionUpload.From(upload)), cancellationToken).ConfigureAwait(false);
        return written.Result();
    }

    /// <inheritdoc/>
    public ValueTask<WindowSketches> ReadAsync(SeriesSelector selector, TimeWindow window, IReadOnlyList<string> groupBy, CancellationToken cancellationToken = default) =>
        ReadAsync(selector, window, groupBy, acceptPartial: false, cancellationToken);

    /// <summary>
    /// Every partition widens the window to whole buckets of its own series; one node would widen
    /// across all series at once. So the read is repeated over the widest span until every
    /// partition reports that same span: the answer is then the one node's, bucket for bucket.
    /// A partial read leaves out the partitions that did not answer in any round.
    /// </summary>
    public ValueTask<WindowSketches> ReadAsync(SeriesSelector selector, TimeWindow window, IReadOnlyList<string> groupBy, bool acceptPartial, CancellationToken cancellationToken) =>
        ReadAsync(selector, window, groupBy, acceptPartial, [], cancellationToken);

    /// <summary>The read, asking no partition already in <paramref name="missing"/> (see <see cref="PartitionFanOut.SomeAsync{T}"/>).</summary>
    private async ValueTask<WindowSketches> ReadAsync(SeriesSelector selector, TimeWindow window, IReadOnlyList<string> groupBy, bool acceptPartial, SortedSet<int> missing, CancellationToken cancellationToken)
    {
        ArgumentNullException.ThrowIfNull(selector);
        ArgumentNullException.ThrowIfNull(groupBy);
        TimeWindow asked = window;
        for (int round = 0; round < MaxWideningRounds; round++)
        {
            var read = PartitionRead.Of(selector, asked, groupBy, null);
            PartitionAnswer[] answers = await AnswersAsync(read, acceptPartial, missing, cancellationToken).ConfigureAwait(false);
            PartitionWindow[] windows = [.. answers.Select(a => a.Result()[0])];
            if (TrySettle(windows, asked, out TimeWindow covered))
            {
                return Leaving(Merge(windows, covered, groupBy), missing);
            }

            asked = covered;
        }

        throw new InvalidOperationException($"the partitions' covered spans of {selector} did not settle after {MaxWideningRounds} rounds.");
    }

    /// <inheritdoc/>
    public ValueTask<IReadOnlyList<WindowSketches>> ReadStepsAsync(SeriesSelector selector, TimeWindow window, long stepMs, IReadOnlyList<string> groupBy, CancellationToken cancellationToken = default) =>
        ReadStepsAsync(selector, window, stepMs, groupBy, acceptPartial: false, cancellationToken);

    /// <inheritdoc/>
    public async ValueTask<IReadOnlyList<WindowSketches>> ReadStepsAsync(SeriesSelector selector, TimeWindow window, long stepMs, IReadOnlyList<string> groupBy, bool acceptPartial, CancellationToken cancellationToken)
    {
        ArgumentNullException.ThrowIfNull(selector);
        ArgumentNullException.ThrowIfNull(groupBy);
        // The partitions' own checks refuse a bad window or step, worded as one node words them.
        var read = PartitionRead.Of(selector, window, groupBy, stepMs);
        var missing = new SortedSet<int>();
        PartitionAnswer[] answers = await AnswersAsync(read, acceptPartial, missing, cancellationToken).ConfigureAwait(false);
        PartitionWindow[][] steps = [.. answers.Select(a => a.Result())];
        var results = new WindowSketches[steps[0].Length];
        for (int i = 0; i < results.Length; i++)
        {
            long from = window.FromUnixMs + (i * stepMs);
            var stepWindow = new TimeWindow(from, Math.Min(from + stepMs, window.ToUnixMs));
            PartitionWindow[] perPartition = [.. steps.Select(s => s[i])];
            results[i] = TrySettle(perPartition, stepWindow, out TimeWindow covered)
                ? Leaving(Merge(perPartition, covered, groupBy), missing)
                : await ReadAsync(selector, stepWindow, groupBy, acceptPartial, missing, cancellationToken).ConfigureAwait(false);
        }

        return results;
    }

    /// <inheritdoc/>
    public async ValueTask<IReadOnlyList<SeriesInfo>> ListSeriesAsync(string? metric = null, CancellationToken cancellationToken = default)
    {
        PartitionSeries[][] lists = await partitions.AllAsync(g => g.List(metric), cancellationToken).ConfigureAwait(false);
        return [.. lists.SelectMany(l => l).Select(s => s.ToInfo()).OrderBy(s => s.Key.Canonical, StringComparer.Ordinal)];
    }

    /// <inheritdoc/>
    public async ValueTask<SeriesInfo?> RemoveAsync(SeriesKey key, CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(key);
        var labels = key.Labels.ToDictionary(l => l.Key, l => l.Value, StringComparer.Ordinal);
        PartitionSeries? removed = await partitions.CallAsync(partitions.Map.Of(key), g => g.Remove(key.Metric, labels), cancellationToken).ConfigureAwait(false);
        return removed?.ToInfo();
    }

    /// <summary>Totals over every partition, one entry per partition; producer marks are counted once per partition that holds them.</summary>
    public async ValueTask<StoreStats> GetStatsAsync(CancellationToken cancellationToken = default)
    {
        PartitionFigures[] figures = await partitions.AllAsync(g => g.Figures(), cancellationToken).ConfigureAwait(false);
        PartitionFigures first = figures[0];
        var tiers = new TierStats[first.TierWidthTicks.Length];
        for (int t = 0; t < tiers.Length; t++)
        {
            tiers[t] = new TierStats(TimeSpan.FromTicks(first.TierWidthTicks[t]), figures.Sum(f => f.TierBuckets[t]), figures.Sum(f => f.TierBytes[t]));
        }

        PartitionStats[] perPartition = [.. figures.Select((f, p) => new PartitionStats(p, f.Series, f.Buckets, f.EstimatedBytes) { Node = f.Node })];
        return new StoreStats(figures.Sum(f => f.Series), figures.Sum(f => f.Buckets), figures.Sum(f => f.EstimatedBytes), tiers, perPartition, figures.Sum(f => f.ProducerMarks));
    }

    /// <inheritdoc/>
    public async ValueTask RollAsync(CancellationToken cancellationToken = default) =>
        await partitions.AllAsync(async g =>
        {
            await g.Roll().ConfigureAwait(false);
            return true;
        }, cancellationToken).ConfigureAwait(false);

    /// <summary>A snapshot of every partition; the figures are their sums, the generation the newest, the time the longest.</summary>
    public async Task<SnapshotInfo?> WriteSnapshotAsync(CancellationToken cancellationToken = default)
    {
        PartitionSnapshot?[] taken = await partitions.AllAsync(g => g.Snapshot(), cancellationToken).ConfigureAwait(false);
        PartitionSnapshot[] written = [.. taken.OfType<PartitionSnapshot>()];
        return written.Length == 0
            ? null
            : new SnapshotInfo(written.Max(s => s.Generation), written.Sum(s => s.Series), written.Sum(s => s.Bytes), written.Max(s => s.Elapsed));
    }

    /// <summary>Every partition's answer; with <paramref name="acceptPartial"/>, those that came, the others added to <paramref name="missing"/>.</summary>
    private async Task<PartitionAnswer[]> AnswersAsync(PartitionRead read, bool acceptPartial, SortedSet<int> missing, CancellationToken cancellationToken)
    {
        if (!acceptPartial)
        {
            return await partitions.AllAsync(g => g.Read(read), cancellationToken).ConfigureAwait(false);
        }

        return await partitions.SomeAsync(g => g.Read(read), missing, cancellationToken).ConfigureAwait(false);
    }

    private WindowSketches Leaving(WindowSketches answer, SortedSet<int> missing) =>
        missing.Count == 0 ? answer : answer with { Partial = new PartialRead(partitions.Map.Count, [.. missing]) };

    /// <summary>True when every partition covered the same span; <paramref name="covered"/> is the widest span any covered.</summary>
    private static bool TrySettle(PartitionWindow[] windows, TimeWindow asked, out TimeWindow covered)
    {
        long from = Math.Min(asked.FromUnixMs, windows.Min(w => w.CoveredFromUnixMs));
        long to = Math.Max(asked.ToUnixMs, windows.Max(w => w.CoveredToUnixMs));
        covered = new TimeWindow(from, to);
        TimeWindow hull = covered;
        return windows.All(w => w.Covered == hull);
    }

    /// <summary>The partitions' groups merged per group, ordered by their label values as one node orders them.</summary>
    private WindowSketches Merge(PartitionWindow[] windows, TimeWindow covered, IReadOnlyList<string> groupBy)
    {
        var groups = new SortedDictionary<string, (Dictionary<string, string> Labels, SeriesSketch Sketch, int Series)>(StringComparer.Ordinal);
        foreach (PartitionWindow window in windows)
        {
            foreach (var (labels, part, series) in window.Decoded())
            {
                string key = string.Join('\u0001', groupBy.Select(name => labels.TryGetValue(name, out string? value) ? value : ""));
                if (!groups.TryGetValue(key, out var group))
                {
                    group = (labels, new SeriesSketch(sketch, seed: 0), 0);
                }

                group.Sketch.Merge(part);
                groups[key] = (group.Labels, group.Sketch, group.Series + series);
            }
        }

        return new WindowSketches([.. groups.Values.Select(g => new GroupSketch(g.Labels, g.Sketch, g.Series))], covered);
    }
}
