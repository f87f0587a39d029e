using SummaryService.Store;

namespace SummaryService.Server.Validation;

/// <summary>
/// Checks a selection against the catalogue: a selector that matches no series is NotFound, and a
/// group-by label that none of the matched series carries is InvalidArgument — both are mistakes a
/// person wants named rather than an empty answer.
/// </summary>
public static class SelectionCheck
{
    /// <summary>Throws unless the selector matches a series and every group-by label is carried by one of them.</summary>
    public static void Require(ISeriesStore store, Selector selector, IReadOnlyList<string> groupBy, string field)
    {
        ArgumentNullException.ThrowIfNull(store);
        ArgumentNullException.ThrowIfNull(selector);
        ArgumentNullException.ThrowIfNull(groupBy);
        var matched = store.ListSeries(selector.Metric).Where(s => selector.Selects(s.Key)).ToArray();
        if (matched.Length == 0)
        {
            string labels = string.Join(", ", selector.MatchLabels.Select(l => $"{l.Key}={l.Value}"));
            throw RpcErrors.NotFound(field, $"no series of metric '{selector.Metric}' matches {(labels.Length == 0 ? "the selector" : $"labels {labels}")}.");
        }

        for (int i = 0; i < groupBy.Count; i++)
        {
            string name = groupBy[i];
            if (!matched.Any(s => s.Key.Label(name) is not null))
            {
                throw RpcErrors.Invalid($"group_by[{i}]", $"group_by[{i}] is '{name}', a label none of the {matched.Length} matched series of '{selector.Metric}' carries.");
            }
        }
    }
}
