using SummaryService.Contract.V1;

namespace SummaryService.Client;

/// <summary>
/// What a window summary should contain beyond the always-present figures. Every member left null
/// takes the server's default, so an empty instance asks exactly what a bare request asks.
/// </summary>
public sealed record SummarizeOptions
{
    /// <summary>Probabilities in [0, 1]; null for 0, .25, .5, .75, .9, .99, 1.</summary>
    public IReadOnlyList<double>? Quantiles { get; init; }

    /// <summary>Label names to group by; one summary per combination of their values.</summary>
    public IReadOnlyList<string>? GroupBy { get; init; }

    /// <summary>Confidence of every interval, strictly between 0 and 1; null for 0.99.</summary>
    public double? Confidence { get; init; }

    /// <summary>Thresholds whose share of values at or below is wanted (SLO questions).</summary>
    public IReadOnlyList<double>? RankOf { get; init; }

    /// <summary>Largest number of modes listed; null for 10.</summary>
    public uint? MaxModes { get; init; }

    /// <summary>Histogram to build; null for none.</summary>
    public HistogramSpec? Histogram { get; init; }

    /// <summary>The request these options describe for one selector and window.</summary>
    public SummarizeRequest ToRequest(Selector selector, SummaryWindow window)
    {
        ArgumentNullException.ThrowIfNull(selector);
        var request = new SummarizeRequest { Selector = selector, Window = window.ToContract() };
        if (Quantiles is not null)
        {
            request.Quantiles.AddRange(Quantiles);
        }

        if (GroupBy is not null)
        {
            request.GroupBy.AddRange(GroupBy);
        }

        if (RankOf is not null)
        {
            request.RankOf.AddRange(RankOf);
        }

        request.Confidence = Confidence ?? 0;
        request.MaxModes = MaxModes ?? 0;
        request.Histogram = Histogram;
        return request;
    }
}

/// <summary>What each step of a <see cref="SummaryClient.TimelineAsync"/> answer contains; null members take the server's defaults.</summary>
public sealed record TimelineOptions
{
    /// <summary>Probabilities in [0, 1]; null for the Summarize defaults.</summary>
    public IReadOnlyList<double>? Quantiles { get; init; }

    /// <summary>Label names to group by within each step.</summary>
    public IReadOnlyList<string>? GroupBy { get; init; }

    /// <summary>Confidence of every interval; null for 0.99.</summary>
    public double? Confidence { get; init; }
}
