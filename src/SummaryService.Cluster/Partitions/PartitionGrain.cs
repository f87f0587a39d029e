using Microsoft.Extensions.Logging;
using Orleans.Concurrency;
using SummaryService.Cluster.Postgres;
using SummaryService.Store;
using SummaryService.Store.Persistence;

namespace SummaryService.Cluster.Partitions;

/// <summary>
/// A partition: the single-node store (<see cref="PersistentSeriesStore"/>) over the partition's
/// log and snapshots in <see cref="IPartitionStorage"/>. Activation loads the newest snapshot and
/// replays the log after it; each write is logged before it is acknowledged; snapshots and rollup
/// run on the partition's own timers; deactivation writes a final snapshot.
/// </summary>
/// <remarks>
/// Reentrant, because the store orders its own writes: a batch is applied under its shard's lock in
/// the turn that receives it, before the first await (the log's commit), so writes apply in arrival
/// order while later calls need not wait for an earlier batch's commit — that wait is what lets the
/// log group commits. Kept alive: a partition's data lives in its memory, and reloading it is costly.
/// </remarks>
[Reentrant]
[KeepAlive]
internal sealed class PartitionGrain(IPartitionStorage storage, PartitionSetup setup, TimeProvider time, ILocalSiloDetails silo, ILogger<PartitionGrain> logger) : Grain, IPartitionGrain
{
    private PersistentSeriesStore? _store;

    private PersistentSeriesStore Store => _store ?? throw new InvalidOperationException("the partition is not active.");

    private int Partition => (int)this.GetPrimaryKeyLong();

    public override async Task OnActivateAsync(CancellationToken cancellationToken)
    {
        try
        {
            // The data directory names only where recovery logs say the store came from.
            var (log, snapshots) = storage.Open(Partition);
            _store = await Task.Run(() => PersistentSeriesStore.Open(setup.Store, setup.Persistence with { DataDirectory = $"partition {Partition} in PostgreSQL" }, log, snapshots, time, logger, new ProducerSequences()), cancellationToken).ConfigureAwait(true);
        }
        catch (Exception ex) when (ex is not OperationCanceledException)
        {
            // Only the message travels: the caller's node may not know the storage's exception types.
            logger.LogError(ex, "Partition {Partition} could not be opened.", Partition);
            throw new StorageUnavailableException($"partition {Partition} could not be opened: {ex.Message}");
        }

        logger.LogInformation("Partition {Partition} active on {Node}: {Recovery}.", Partition, silo.SiloAddress, _store.Recovery);
        if (setup.Persistence.Durability != DurabilityMode.None)
        {
            this.RegisterGrainTimer(SnapshotOnTimerAsync, setup.Persistence.SnapshotInterval, setup.Persistence.SnapshotInterval);
        }

        this.RegisterGrainTimer(RollOnTimerAsync, setup.RollupInterval, setup.RollupInterval);
    }

    public override async Task OnDeactivateAsync(DeactivationReason reason, CancellationToken cancellationToken)
    {
        if (_store is not null)
        {
            await _store.DisposeAsync().ConfigureAwait(true);
            _store = null;
        }
    }

    /// <summary>
    /// Each write is applied in the store's synchronous part of its call, before the next one starts,
    /// so they apply in the order given; then all wait for their log commits together.
    /// </summary>
    public Task<PartitionWritten[]> Write(PartitionWrite[] writes)
    {
        ArgumentNullException.ThrowIfNull(writes);
        var written = new Task<PartitionWritten>[writes.Length];
        for (int i = 0; i < writes.Length; i++)
        {
            PartitionWrite write = writes[i];
            written[i] = WrittenAsync(write.Batch is { } batch ? Store.AppendAsync(batch.ToBatch()) : Store.MergeSketchAsync(write.Upload!.ToUpload()));
        }

        return Task.WhenAll(written);
    }

    private async Task<PartitionWritten> WrittenAsync(ValueTask<AppendResult> applying)
    {
        try
        {
            AppendResult result = await applying.ConfigureAwait(true);
            return new PartitionWritten(result.Accepted, result.Duplicate, null);
        }
        catch (StoreRejectedException rejection)
        {
            return new PartitionWritten(0, false, PartitionRejection.From(rejection));
        }
        catch (PartitionFencedException fenced)
        {
            throw Superseded(fenced);
        }
    }

    public async Task<PartitionAnswer> Read(PartitionRead read)
    {
        ArgumentNullException.ThrowIfNull(read);
        try
        {
            if (read.StepMs is not long stepMs)
            {
                WindowSketches answer = await Store.ReadAsync(read.Selector(), read.Window(), read.GroupBy).ConfigureAwait(true);
                return new PartitionAnswer([PartitionWindow.From(answer)], null);
            }

            IReadOnlyList<WindowSketches> steps = await Store.ReadStepsAsync(read.Selector(), read.Window(), stepMs, read.GroupBy).ConfigureAwait(true);
            return new PartitionAnswer([.. steps.Select(PartitionWindow.From)], null);
        }
        catch (StoreRejectedException rejection)
        {
            return new PartitionAnswer([], PartitionRejection.From(rejection));
        }
    }

    public async Task<PartitionSeries[]> List(string? metric) =>
        [.. (await Store.ListSeriesAsync(metric).ConfigureAwait(true)).Select(PartitionSeries.From)];

    public async Task<PartitionSeries?> Remove(string metric, Dictionary<string, string> labels)
    {
        SeriesInfo? removed = await Store.RemoveAsync(new SeriesKey(metric, labels)).ConfigureAwait(true);
        return removed is null ? null : PartitionSeries.From(removed);
    }

    public async Task<PartitionFigures> Figures() => PartitionFigures.From(await Store.GetStatsAsync().ConfigureAwait(true), silo.SiloAddress.ToString());

    public Task Roll() => Store.RollAsync().AsTask();

    public async Task<PartitionSnapshot?> Snapshot()
    {
        SnapshotInfo? info = await Store.WriteSnapshotAsync().ConfigureAwait(true);
        return info is null ? null : new PartitionSnapshot(info.Generation, info.Series, info.Bytes, info.Elapsed);
    }

    /// <summary>
    /// This activation was superseded by a newer one elsewhere (its memory now lags the log the
    /// other writes): it goes away, so the next call reaches the current one, and the caller learns
    /// that its write was not kept. Only the message travels, as for every storage failure.
    /// </summary>
    private StorageUnavailableException Superseded(PartitionFencedException fenced)
    {
        logger.LogWarning("Partition {Partition} on {Node}: {Reason} Deactivating.", Partition, silo.SiloAddress, fenced.Message);
        DeactivateOnIdle();
        return new StorageUnavailableException(fenced.Message);
    }

    private async Task SnapshotOnTimerAsync(CancellationToken cancellationToken)
    {
        try
        {
            await Store.WriteSnapshotAsync(cancellationToken).ConfigureAwait(true);
        }
        catch (PartitionFencedException fenced)
        {
            _ = Superseded(fenced);
        }
        catch (StorageUnavailableException ex)
        {
            // The log still holds everything; the next tick tries again.
            logger.LogWarning("Partition {Partition}: periodic snapshot failed: {Reason}", Partition, ex.Message);
        }
    }

    private Task RollOnTimerAsync(CancellationToken cancellationToken) => Store.RollAsync(cancellationToken).AsTask();
}
