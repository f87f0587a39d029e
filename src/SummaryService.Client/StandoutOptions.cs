using SummaryService.Contract.V1;

namespace SummaryService.Client;

/// <summary>
/// How to rank the groups of a split. Every member left null takes the server's default, so an
/// empty instance asks exactly what a bare request asks: the Kolmogorov–Smirnov distance, .5, .9,
/// .99 at 0.99 confidence, one window.
/// </summary>
public sealed record StandoutOptions
{
    /// <summary>Probabilities strictly between 0 and 1 compared with the rest; null for .5, .9, .99.</summary>
    public IReadOnlyList<double>? Quantiles { get; init; }

    /// <summary>Confidence of every interval and verdict; null for 0.99.</summary>
    public double? Confidence { get; init; }

    /// <summary>What ranks the groups; null for the distance.</summary>
    public StandoutMeasure? Measure { get; init; }

    /// <summary>The quantile a ratio or shift ranks by, one of <see cref="Quantiles"/>; null for the highest.</summary>
    public double? MeasureQuantile { get; init; }

    /// <summary>An earlier window: groups then rank by how much each moved from it against how much the rest moved.</summary>
    public SummaryWindow? Before { get; init; }

    /// <summary>The request these options describe.</summary>
    public StandoutRequest ToRequest(Selector selector, string splitBy, SummaryWindow window)
    {
        ArgumentNullException.ThrowIfNull(selector);
        ArgumentException.ThrowIfNullOrEmpty(splitBy);
        var request = new StandoutRequest
        {
            Selector = selector,
            SplitBy = splitBy,
            Window = window.ToContract(),
            Before = Before?.ToContract(),
            Confidence = Confidence ?? 0,
            Measure = Measure ?? StandoutMeasure.Unspecified,
            MeasureQuantile = MeasureQuantile ?? 0,
        };
        if (Quantiles is not null)
        {
            request.Quantiles.AddRange(Quantiles);
        }

        return request;
    }
}
