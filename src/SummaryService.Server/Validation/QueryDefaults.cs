namespace SummaryService.Server.Validation;

/// <summary>
/// The defaults and ceilings of query requests that are part of the contract rather than of one
/// deployment (those are in <see cref="Configuration.ServerSettings"/>); summary defaults
/// (quantiles, confidence, modes) are the sketches' own, in <see cref="Sketches.Summaries.SummaryOptions"/>.
/// </summary>
public static class QueryDefaults
{
    /// <summary>Quantiles a comparison shows when the request names none: the centre and the two tails dashboards watch.</summary>
    public static readonly IReadOnlyList<double> CompareQuantiles = [0.5, 0.9, 0.99];

    /// <summary>Most modes one summary lists.</summary>
    public const uint MaxModes = 1000;

    /// <summary>Most histogram bins one summary holds.</summary>
    public const uint MaxHistogramBins = 10_000;
}
