using SummaryService.Cli.Parsing;
using SummaryService.Contract.V1;

namespace SummaryService.Cli.Commands;

/// <summary>Builds selectors from the metric argument and label matchers.</summary>
public static class Selection
{
    /// <summary>The selector for <paramref name="metric"/> with every matcher in <paramref name="matchers"/>.</summary>
    public static Selector Of(string metric, IEnumerable<string>? matchers, string option = "--label")
    {
        if (string.IsNullOrWhiteSpace(metric))
        {
            throw new UsageException("the metric name is empty; name the metric to read (see 'sumq catalogue').");
        }

        if (metric.StartsWith('-'))
        {
            throw new UsageException($"'{metric}' is not an option of this command, and a metric name starts with a letter; see --help.");
        }

        if (!LabelText.TryParse(matchers ?? [], out var labels, out string error))
        {
            throw new UsageException($"{option}: {error}");
        }

        var selector = new Selector { Metric = metric };
        selector.LabelEquals.Add(labels);
        return selector;
    }

    /// <summary>Checks the quantiles locally so a typo is a usage error with the option named.</summary>
    public static double[] Quantiles(double[]? quantiles)
    {
        foreach (double q in quantiles ?? [])
        {
            if (!(q >= 0 && q <= 1))
            {
                throw new UsageException($"--quantile {q} lies outside [0, 1]; write 0.99 for the 99th percentile.");
            }
        }

        return quantiles ?? [];
    }

    /// <summary>Checks the confidence locally.</summary>
    public static double Confidence(double confidence) =>
        confidence > 0 && confidence < 1 ? confidence : throw new UsageException($"--confidence {confidence} must lie strictly between 0 and 1 (e.g. 0.99).");
}
