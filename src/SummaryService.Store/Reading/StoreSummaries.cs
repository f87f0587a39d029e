using SummaryService.Sketches;
using SummaryService.Sketches.Summaries;

namespace SummaryService.Store;

/// <summary>
/// Summaries built above the seam: any <see cref="ISeriesStore"/> returns merged sketches per group,
/// and these turn them into the figures a query asks for. Kept out of the store so that every back
/// end (one node or a cluster merging its partitions' sketches) answers the same figures from the
/// same sketches, and the summary options never travel to where the data lives.
/// </summary>
public static class StoreSummaries
{
    /// <summary>Summary of the selected series over the window, one per combination of the group-by labels' values.</summary>
    /// <exception cref="StoreRejectedException">The options are out of range or the window is empty.</exception>
    public static async ValueTask<WindowSummary> SummarizeAsync(this ISeriesStore store, SeriesSelector selector, TimeWindow window, IReadOnlyList<string> groupBy, SummaryOptions options, CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(store);
        CheckOptions(options);
        WindowSketches read = await store.ReadAsync(selector, window, groupBy, cancellationToken).ConfigureAwait(false);
        return Summarize(read, options);
    }

    /// <summary>One summary per step of the window, oldest first (see <see cref="ISeriesStore.ReadStepsAsync(SeriesSelector, TimeWindow, long, IReadOnlyList{string}, CancellationToken)"/>).</summary>
    /// <exception cref="StoreRejectedException">The options are out of range, the window is empty, or the step is refused.</exception>
    public static async ValueTask<IReadOnlyList<WindowSummary>> SummarizeStepsAsync(this ISeriesStore store, SeriesSelector selector, TimeWindow window, long stepMs, IReadOnlyList<string> groupBy, SummaryOptions options, CancellationToken cancellationToken = default)
    {
        ArgumentNullException.ThrowIfNull(store);
        CheckOptions(options);
        IReadOnlyList<WindowSketches> steps = await store.ReadStepsAsync(selector, window, stepMs, groupBy, cancellationToken).ConfigureAwait(false);
        var answers = new WindowSummary[steps.Count];
        for (int i = 0; i < answers.Length; i++)
        {
            answers[i] = Summarize(steps[i], options);
        }

        return answers;
    }

    /// <summary>The figures of every group of one read.</summary>
    /// <exception cref="StoreRejectedException">The options are out of range.</exception>
    public static WindowSummary Summarize(WindowSketches read, SummaryOptions options)
    {
        ArgumentNullException.ThrowIfNull(read);
        CheckOptions(options);
        var groups = new SummarizedGroup[read.Groups.Count];
        for (int g = 0; g < groups.Length; g++)
        {
            GroupSketch group = read.Groups[g];
            groups[g] = new SummarizedGroup(group.Labels, group.Sketch.Summarize(options), group.SeriesMerged, group.Sketch);
        }

        return new WindowSummary(groups, read.Covered);
    }

    private static void CheckOptions(SummaryOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        try
        {
            options.Validate();
        }
        catch (ArgumentOutOfRangeException ex)
        {
            throw new StoreRejectedException(RejectReason.InvalidQuery, ex.ParamName ?? "options", ex.Message);
        }
    }
}

/// <summary>A window query's figures.</summary>
/// <param name="Groups">One entry per group, ordered by their label values.</param>
/// <param name="Covered">Span of the buckets actually merged (bucket-aligned; may reach beyond the window), or the window itself when no bucket overlapped.</param>
public sealed record WindowSummary(IReadOnlyList<SummarizedGroup> Groups, TimeWindow Covered);

/// <summary>One group of a window query with its figures.</summary>
/// <param name="Labels">The group-by labels and their values (empty string where a series lacks the label).</param>
/// <param name="Summary">The merged figures.</param>
/// <param name="SeriesMerged">How many series were merged into this group.</param>
/// <param name="Sketch">The merged sketch, for callers that compare distributions.</param>
public sealed record SummarizedGroup(IReadOnlyDictionary<string, string> Labels, Summary Summary, int SeriesMerged, SeriesSketch Sketch);
