using SummaryService.Store;

namespace SummaryService.Server.Validation;

/// <summary>
/// Checks a selection by the answer it got: a selector that matched no series is NotFound, and a
/// group-by label that none of the matched series carries is InvalidArgument — both are mistakes a
/// person wants named rather than an empty answer.
/// </summary>
/// <remarks>
/// The store answers with one group per combination of group-by values of every selected series
/// (empty groups included), so the answer holds all the check needs. Asking the catalogue instead
/// would visit every bucket of every series of the metric on each query, which at thousands of
/// series costs more than the query itself.
/// </remarks>
public static class SelectionCheck
{
    /// <summary>Throws unless the answer merged a series and every group-by label is carried by one of them (label values are never empty).</summary>
    public static void Require(WindowSketches answer, SeriesSelector selector, IReadOnlyList<string> groupBy, string field)
    {
        ArgumentNullException.ThrowIfNull(answer);
        ArgumentNullException.ThrowIfNull(selector);
        ArgumentNullException.ThrowIfNull(groupBy);
        if (answer.Groups.Count == 0)
        {
            throw RpcErrors.NotFound(field, $"no series matches {selector}.");
        }

        for (int i = 0; i < groupBy.Count; i++)
        {
            string name = groupBy[i];
            bool carried = false;
            int matched = 0;
            foreach (GroupSketch group in answer.Groups)
            {
                carried |= group.Labels.TryGetValue(name, out string? value) && value.Length > 0;
                matched += group.SeriesMerged;
            }

            if (!carried)
            {
                throw RpcErrors.Invalid($"group_by[{i}]", $"group_by[{i}] is '{name}', a label none of the {matched} series matching {selector} carries.");
            }
        }
    }
}
