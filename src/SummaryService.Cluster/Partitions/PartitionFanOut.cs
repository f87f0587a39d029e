using SummaryService.Readable;
using SummaryService.Store;

namespace SummaryService.Cluster.Partitions;

/// <summary>
/// Calls partition grains with a deadline. A partition that misses it or fails makes the whole call
/// fail with <see cref="StorageUnavailableException"/> naming it: never a silently partial answer
/// (<see cref="SomeAsync{T}"/> gives the answers that came, for callers that accept partial ones).
/// </summary>
public sealed class PartitionFanOut(IGrainFactory grains, PartitionMap map, TimeSpan timeout)
{
    /// <summary>The partitions.</summary>
    public PartitionMap Map { get; } = map;

    /// <summary>Calls one partition.</summary>
    public async Task<T> CallAsync<T>(int partition, Func<IPartitionGrain, Task<T>> call, CancellationToken cancellationToken)
    {
        ArgumentNullException.ThrowIfNull(call);
        Task<T> task = call(grains.GetGrain<IPartitionGrain>(partition)).WaitAsync(timeout, cancellationToken);
        try
        {
            return await task.ConfigureAwait(false);
        }
        catch (Exception ex) when (!cancellationToken.IsCancellationRequested && ex is not StoreRejectedException)
        {
            throw new StorageUnavailableException($"partition {Describe(partition, ex)}; nothing was answered.", ex);
        }
    }

    /// <summary>Calls every partition at once; the answers in partition order.</summary>
    public async Task<T[]> AllAsync<T>(Func<IPartitionGrain, Task<T>> call, CancellationToken cancellationToken)
    {
        Task<T>[] tasks = await CallEveryAsync(call, cancellationToken).ConfigureAwait(false);
        int[] failed = Failed(tasks);
        if (failed.Length > 0)
        {
            throw Unanswered(tasks, failed, "no partial answer is given");
        }

        return [.. tasks.Select(t => t.Result)];
    }

    /// <summary>
    /// Calls every partition at once but those in <paramref name="missing"/> (which did not answer
    /// an earlier call of the same read: waiting for them again would only add a deadline); the
    /// answers of those that answered, in partition order, the others added to <paramref name="missing"/>.
    /// Fails as <see cref="AllAsync{T}"/> does only when none answered.
    /// </summary>
    public async Task<T[]> SomeAsync<T>(Func<IPartitionGrain, Task<T>> call, SortedSet<int> missing, CancellationToken cancellationToken)
    {
        ArgumentNullException.ThrowIfNull(missing);
        Task<T>[] tasks = await CallEveryAsync(call, cancellationToken, missing).ConfigureAwait(false);
        int[] failed = Failed(tasks);
        missing.UnionWith(failed);
        if (failed.Length == tasks.Length)
        {
            throw Unanswered(tasks, failed, "there is nothing to answer from");
        }

        return [.. tasks.Where(t => t.IsCompletedSuccessfully).Select(t => t.Result)];
    }

    private async Task<Task<T>[]> CallEveryAsync<T>(Func<IPartitionGrain, Task<T>> call, CancellationToken cancellationToken, SortedSet<int>? skipped = null)
    {
        ArgumentNullException.ThrowIfNull(call);
        var tasks = new Task<T>[Map.Count];
        for (int p = 0; p < tasks.Length; p++)
        {
            tasks[p] = skipped?.Contains(p) == true
                ? Task.FromException<T>(new TimeoutException())
                : call(grains.GetGrain<IPartitionGrain>(p)).WaitAsync(timeout, cancellationToken);
        }

        try
        {
            await Task.WhenAll(tasks).ConfigureAwait(false);
        }
        catch (Exception) when (!cancellationToken.IsCancellationRequested)
        {
            // Every failure is read from its own task, so all of them are named.
        }

        cancellationToken.ThrowIfCancellationRequested();
        return tasks;
    }

    private static int[] Failed<T>(Task<T>[] tasks) => [.. Enumerable.Range(0, tasks.Length).Where(p => !tasks[p].IsCompletedSuccessfully)];

    private StorageUnavailableException Unanswered<T>(Task<T>[] tasks, int[] failed, string consequence)
    {
        Exception first = tasks[failed[0]].Exception!.InnerException!;
        string named = string.Join("; ", failed.Take(8).Select(p => Describe(p, tasks[p].Exception!.InnerException!)));
        string more = failed.Length > 8 ? $" and {failed.Length - 8} more" : "";
        return new StorageUnavailableException($"{failed.Length} of {tasks.Length} partitions did not answer: partition {named}{more}; {consequence}.", first);
    }

    private string Describe(int partition, Exception failure) => failure is TimeoutException
        ? $"{partition} missed the {DurationText.Format(timeout)} deadline"
        : $"{partition} failed ({failure.GetType().Name}: {failure.Message})";
}
