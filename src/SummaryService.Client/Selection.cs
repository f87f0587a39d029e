using SummaryService.Contract.V1;

namespace SummaryService.Client;

/// <summary>Builds the contract's <see cref="Selector"/>: one metric, and labels every merged series must carry.</summary>
public static class Selection
{
    /// <summary>Every series of <paramref name="metric"/> whose labels include all of <paramref name="labelEquals"/>.</summary>
    public static Selector Of(string metric, params ReadOnlySpan<(string Name, string Value)> labelEquals)
    {
        ArgumentException.ThrowIfNullOrEmpty(metric);
        var selector = new Selector { Metric = metric };
        foreach (var (name, value) in labelEquals)
        {
            selector.LabelEquals[name] = value;
        }

        return selector;
    }
}
