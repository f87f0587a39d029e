using SummaryService.Sketches;

namespace SummaryService.Store;

/// <summary>
/// A sketch a producer aggregated itself, for one series and one instant: merged whole into the
/// bucket holding <see cref="TimeUnixMs"/>, so pre-aggregation upstream costs no accuracy beyond
/// the sketch's own bound.
/// </summary>
public sealed record UploadedSketch
{
    /// <summary>Metric name.</summary>
    public required string Metric { get; init; }

    /// <summary>Labels of the series.</summary>
    public IReadOnlyDictionary<string, string> Labels { get; init; } = new Dictionary<string, string>();

    /// <summary>The values, already sketched; must hold at least one value and share the store's mode settings.</summary>
    public required SeriesSketch Sketch { get; init; }

    /// <summary>Instant the values belong to, Unix ms; 0 for now.</summary>
    public long TimeUnixMs { get; init; }

    /// <summary>Producer identity for idempotent retries; empty when the producer does not retry.</summary>
    public string Producer { get; init; } = "";

    /// <summary>Per-producer sequence number, increasing; 0 when unused.</summary>
    public ulong Sequence { get; init; }
}
